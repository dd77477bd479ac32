/** Page helpers shared by the dashboard tests: open a view, wait for text, read the Rack. */
import type { Page } from 'playwright-core';

/** Open a view with its keyboard shortcut (Alt+1..6), as a person would. */
export async function openViewByKey(
  page: Page,
  view: 'bench' | 'rack' | 'runs' | 'feed' | 'connect' | 'diagnosis',
): Promise<void> {
  const index = ['bench', 'rack', 'runs', 'feed', 'connect', 'diagnosis'].indexOf(view) + 1;
  await page.keyboard.press(`Alt+${index}`);
  await page.locator(`#view-${view}`).waitFor({ state: 'visible' });
}

/** The id of the first station the Rack view shows (the CLI picks the simulated station's id). */
export async function firstStationId(page: Page, timeoutMs = 15_000): Promise<string> {
  await openViewByKey(page, 'rack');
  const tile = page.locator('#view-rack .tile').first();
  await tile.waitFor({ state: 'visible', timeout: timeoutMs });
  const id = await tile.getAttribute('data-station');
  if (!id) throw new Error('a Rack tile without a station id');
  return id;
}
