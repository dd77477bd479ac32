/**
 * The Rack at 68 stations in real Chromium: four benches of 17 published to a real Mosquitto
 * broker (the topic scheme of the README, by a client of the test's own, as any other tool
 * could), one `taperline serve --subscribe` showing them grouped by bench, trouble first; a
 * bench whose link is down as one stale group; the compact table sorted and filtered.
 * Screenshots: test-results/screenshots/rack-groups.png and rack-table.png.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { connect, type MqttClient } from 'mqtt';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { openViewByKey } from './helpers/page';
import { createBroker, type Broker } from '../integration/mosquitto';

const BENCHES = ['bench-a', 'bench-b', 'bench-c', 'bench-d'];
const PER_BENCH = 17;
// Invented demo packs: trail-camera 2S Li-ion packs on a burn-in shelf.
const PROFILE = {
  name: 'trail camera 2S (demo)',
  chemistry: 'li-ion',
  cells: 2,
  capacityAh: 2,
  chargeCurrentA: 1,
};
/** Stations running hot: 50 °C is above the 45 °C top of the Li-ion charge window (the profile default). */
const HOT = new Set(['bench-b/slot-03', 'bench-c/slot-11']);

function publishAll(client: MqttClient, prefix: string): Promise<void> {
  const nowS = Date.now() / 1000;
  const jobs: Promise<unknown>[] = [];
  for (const bench of BENCHES) {
    jobs.push(
      client.publishAsync(`${prefix}/${bench}/online`, JSON.stringify({ online: true, rxS: nowS }), {
        qos: 1,
        retain: true,
      }),
    );
    for (let i = 1; i <= PER_BENCH; i++) {
      const station = `slot-${String(i).padStart(2, '0')}`;
      const id = `${bench}/${station}`;
      jobs.push(
        client.publishAsync(
          `${prefix}/${bench}/${station}/status`,
          JSON.stringify({
            label: `shelf ${i}`,
            source: { state: 'open', detail: 'demo' },
            profile: PROFILE,
            runId: i,
            rxS: nowS,
          }),
          { qos: 1, retain: true },
        ),
      );
      const samples = Array.from({ length: 20 }, (_, k) => ({
        rxS: nowS - 20 + k,
        t: k,
        deviceS: k,
        vbatV: 7.3 + i * 0.01 + k * 0.002,
        ibatA: 0.9 + (i % 5) * 0.01,
        tempC: HOT.has(id) ? 50 : 24 + (i % 7) * 0.5,
        vinV: 12,
        chg: true,
        flt: false,
      }));
      jobs.push(
        client.publishAsync(
          `${prefix}/${bench}/${station}/samples`,
          JSON.stringify({ session: nowS, seq: 1, samples }),
          { qos: 1 },
        ),
      );
    }
  }
  return Promise.all(jobs).then(() => undefined);
}

test(
  'the Rack at 68 remote stations: bench groups, trouble first, a stale bench, the compact table',
  { timeout: 240_000 },
  async (t) => {
    const broker: Broker = await createBroker();
    await broker.start();
    let serve: ServeHandle | null = null;
    let browser: BrowserSession | null = null;
    let client: MqttClient | null = null;
    t.after(async () => {
      await browser?.close();
      await serve?.stop();
      await client?.endAsync(true);
      await broker.dispose();
    });
    serve = await startServe(['--subscribe', broker.url('shelf')]);
    client = connect(`mqtt://127.0.0.1:${broker.port}`, { clientId: 'rack-e2e-publisher' });
    await new Promise((r) => client!.once('connect', r));
    await publishAll(client, 'shelf');
    // bench-d's link goes down: the broker's last will of a bench, as `record --publish` leaves it.
    await client.publishAsync('shelf/bench-d/online', JSON.stringify({ online: false }), {
      qos: 1,
      retain: true,
    });

    browser = await openBrowser({ width: 1440, height: 900 });
    const { page } = browser;
    await page.goto(pageUrl(serve, 'rack'));
    await openViewByKey(page, 'rack');
    // 3 benches of tiles (51) and bench-d as one stale group.
    await page.waitForFunction(() => document.querySelectorAll('#view-rack .tile').length === 51, undefined, {
      timeout: 60_000,
    });
    const stale = page.locator('#view-rack .rack-groups .rack-stale');
    await stale.waitFor({ timeout: 20_000 });
    assert.equal(await stale.count(), 1);
    assert.equal(await stale.getAttribute('data-bench'), 'bench-d');
    assert.match((await stale.textContent()) ?? '', /bench-d: link down.*17 stations, values are stale/);
    const groups = await page
      .locator('#view-rack .rack-group')
      .evaluateAll((els) => els.map((e) => e.getAttribute('aria-label')));
    assert.equal(groups.length, 4);
    // Trouble first: the benches with a hot pack lead, then the stale bench, then the quiet one.
    await page.waitForFunction(
      () => document.querySelectorAll('#view-rack .tile-trouble').length === 2,
      undefined,
      { timeout: 30_000 },
    );
    assert.deepEqual(groups.slice(0, 2).sort(), ['bench-b', 'bench-c']);
    assert.equal(groups[2], 'bench-d');
    assert.equal(groups[3], 'bench-a');
    const firstTile = page.locator('#view-rack .rack-group').first().locator('.tile').first();
    assert.ok(HOT.has((await firstTile.getAttribute('data-station')) ?? ''), 'a hot station leads its group');
    await screenshot(page, 'rack-groups');

    // The compact table: one row per station, the stale bench as one row.
    await page.locator('label[for="rack-mode-table"]').click();
    const rows = page.locator('#view-rack .rack-table tbody tr');
    await page.waitForFunction(
      () => document.querySelectorAll('#view-rack .rack-table tbody tr').length === 52,
      undefined,
      { timeout: 20_000 },
    );
    const heads = await page.locator('#view-rack .rack-table thead th').allTextContents();
    assert.deepEqual(
      heads.map((x) => x.replace(/[▾▴]/g, '').trim()),
      ['Bench', 'Station', 'Board', 'Phase', 'V', 'A', '°C', 'Ah', 'Alarms'],
    );
    assert.ok(
      HOT.has((await rows.first().getAttribute('data-station')) ?? ''),
      'trouble first in the table too',
    );
    assert.match((await rows.first().textContent()) ?? '', /overtemp/);
    assert.equal(await page.locator('#view-rack .rack-table .row-stale').count(), 1);

    // Sorted by temperature, hottest first; then by station name.
    await page.locator('#view-rack .sort-button[data-sort="tempC"]').click();
    const temps = await page
      .locator('#view-rack .rack-table tbody tr[data-station] td:nth-child(7)')
      .allTextContents();
    const values = temps.map(Number);
    assert.deepEqual(
      values,
      [...values].sort((a, b) => b - a),
    );
    assert.equal(values[0], 50);
    await page.locator('#view-rack .sort-button[data-sort="station"]').click();
    const names = await page
      .locator('#view-rack .rack-table tbody tr[data-station] td:nth-child(2)')
      .allTextContents();
    assert.deepEqual(
      names,
      [...names].sort((a, b) => a.localeCompare(b, undefined, { numeric: true })),
    );

    // Filtered by words: a bench and an alarm.
    await page.fill('#rack-filter', 'bench-c overtemp');
    await page.waitForFunction(
      () => document.querySelectorAll('#view-rack .rack-table tbody tr').length === 1,
    );
    assert.equal(await rows.first().getAttribute('data-station'), 'bench-c/slot-11');
    assert.match((await page.locator('#view-rack .rack-count').textContent()) ?? '', /^1 of 68 stations$/);
    await page.fill('#rack-filter', '');
    await page.locator('#rack-sort-trouble').click();
    await screenshot(page, 'rack-table');
    // Enter on a row opens its Bench view.
    await rows.first().focus();
    await page.keyboard.press('Enter');
    await page.locator('#view-bench').waitFor({ state: 'visible' });
    assert.deepEqual(browser.errors, []);
    // Remote ids (`<bench>/<station>`) are good ids for every request: their history loaded.
    assert.equal(await page.getByText(/could not be loaded/).count(), 0);
  },
);
