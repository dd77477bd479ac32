/**
 * The Line feed with a real serial station: a socat pty pair, `taperline serve` reading one
 * end, this test writing telemetry (and one bad line) into the other. The feed marks the
 * rejected line with its reason and the firmware `#` line with its own marker, pauses and
 * filters, and the send box writes the chosen line ending to the port.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import {
  existsSync,
  mkdtempSync,
  openSync,
  rmSync,
  writeFileSync,
  writeSync,
  closeSync,
  createReadStream,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { openViewByKey } from './helpers/page';

async function waitFor(check: () => boolean, timeoutMs: number, what: string): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (!check()) {
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

test('Line feed of a serial station on a pty pair', { timeout: 180_000 }, async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-feed-'));
  const devicePath = join(dir, 'charger');
  const testPath = join(dir, 'bench-side');
  const socat = spawn('socat', [`pty,raw,echo=0,link=${devicePath}`, `pty,raw,echo=0,link=${testPath}`], {
    stdio: 'ignore',
  });
  let serve: ServeHandle | null = null;
  let browser: BrowserSession | null = null;
  let fd: number | null = null;
  let reader: ReturnType<typeof createReadStream> | null = null;
  t.after(async () => {
    await browser?.close();
    await serve?.stop();
    // Stop socat first: its exit ends the read pending on the pty, then the stream can close.
    const socatGone = new Promise<void>((resolve) =>
      socat.exitCode !== null ? resolve() : socat.once('exit', () => resolve()),
    );
    socat.kill('SIGTERM');
    await socatGone;
    if (reader) {
      if (!reader.closed)
        await new Promise<void>((resolve) => reader!.once('close', () => resolve()).destroy());
    } else if (fd !== null) closeSync(fd);
    rmSync(dir, { recursive: true, force: true });
  });
  await waitFor(() => existsSync(devicePath) && existsSync(testPath), 10_000, 'the socat pty pair');

  // An invented 3S garden-sensor pack (demo profile).
  const profilePath = join(dir, 'profile.json');
  writeFileSync(
    profilePath,
    JSON.stringify({
      name: 'feed test 3S pack (demo)',
      chemistry: 'li-ion',
      cells: 3,
      capacityAh: 2.5,
      chargeCurrentA: 1,
    }),
  );
  serve = await startServe(['--station-port', devicePath, '--baud', '115200', '--profile', profilePath]);

  fd = openSync(testPath, 'r+');
  let received = '';
  reader = createReadStream('', { fd, autoClose: true });
  reader.on('data', (d) => (received += String(d)));
  // The pty reports EIO once socat has gone at the end of the test; nothing is lost by then.
  reader.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code !== 'EIO') throw err;
  });
  const write = (line: string) => writeSync(fd!, `${line}\n`);

  browser = await openBrowser();
  const { page } = browser;
  await page.goto(pageUrl(serve, 'feed'));
  await page.locator('#feed-station option').first().waitFor({ state: 'attached', timeout: 15_000 });

  // docs/telemetry.md: key=value samples, a `#` firmware message, and a value that is not a number.
  write('# feed-test firmware 0.1 (demo)');
  for (let i = 0; i < 5; i++)
    write(`t=${i} vbat=${(11.1 + i * 0.01).toFixed(3)} ibat=0.98 temp=25.${i} vin=15.0 iin=0.8`);
  write('t=5 vbat=eleven ibat=0.98');
  write('t=6 vbat=11.160 ibat=0.97 temp=25.6');

  await t.test('a rejected line shows its reason, a firmware line its marker', async () => {
    const rejected = page.locator('#view-feed .feed-row.kind-rejected').first();
    await rejected.waitFor({ timeout: 20_000 });
    assert.equal(await rejected.locator('.feed-text').textContent(), 't=5 vbat=eleven ibat=0.98');
    // RejectReason `bad-value`: a canonical field whose value is not a number (shared/telemetry/types.ts).
    assert.match((await rejected.locator('.feed-reason').textContent()) ?? '', /^bad-value/);
    assert.equal(await rejected.locator('.feed-marker').textContent(), 'REJECTED');
    const firmware = page.locator('#view-feed .feed-row.kind-firmware').first();
    assert.equal(await firmware.locator('.feed-marker').textContent(), '# FW');
    assert.equal((await page.locator('#view-feed .feed-row.kind-sample').count()) >= 6, true);
  });

  await t.test('the filter and pause work', async () => {
    await page.locator('#feed-filter').fill('bad-value');
    await page.waitForFunction(() => document.querySelectorAll('#view-feed .feed-row').length === 1);
    await page.locator('#feed-filter').fill('');
    await page.locator('#feed-pause').click();
    const shown = await page.locator('#view-feed .feed-row').count();
    write('t=7 vbat=11.170 ibat=0.97 temp=25.7');
    await page.waitForFunction(
      () => /1 new line held/.test(document.querySelector('#view-feed .feed-counts')?.textContent ?? ''),
      undefined,
      { timeout: 10_000 },
    );
    assert.equal(await page.locator('#view-feed .feed-row').count(), shown);
    await page.locator('#feed-pause').click();
    await page.waitForFunction(
      (n) => document.querySelectorAll('#view-feed .feed-row').length === n + 1,
      shown,
    );
  });

  await t.test('the send box writes the chosen line ending to the port', async () => {
    await page.locator('#feed-send-text').fill('status?');
    await page.locator('#feed-send-ending').selectOption({ label: '\\r\\n' });
    await page.locator('#feed-send-text').press('Enter');
    await waitFor(() => received.includes('status?\r\n'), 10_000, 'the sent line on the port');
    assert.ok(received.endsWith('status?\r\n'));
    await page.locator('#view-feed .feed-row.kind-sent').first().waitFor({ timeout: 10_000 });
    await page.waitForTimeout(300);
    await screenshot(page, 'feed');
  });

  await t.test('the feed stays bounded to the last 5,000 lines', async () => {
    const burst = 5_300;
    let text = '';
    for (let i = 0; i < burst; i++) text += `t=${100 + i} vbat=11.200 ibat=0.95 temp=26.0\n`;
    writeSync(fd!, text);
    await page.waitForFunction(
      (last) => document.querySelector('#view-feed .feed-row:last-child .feed-text')?.textContent === last,
      `t=${100 + burst - 1} vbat=11.200 ibat=0.95 temp=26.0`,
      { timeout: 60_000 },
    );
    const rows = await page.locator('#view-feed .feed-row').count();
    // LINE_FEED_LIMIT (renderer/feed-ring.ts): the oldest lines leave the view, the newest stay.
    assert.equal(rows, 5_000);
    assert.equal(
      await page.locator('#view-feed .feed-row:first-child .feed-text').textContent(),
      `t=${100 + burst - 5_000} vbat=11.200 ibat=0.95 temp=26.0`,
    );
  });

  await openViewByKey(page, 'bench');
});
