import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, openSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openBrowser } from './helpers/browser';
import { startServe, pageUrl } from './helpers/serve';
(async () => {
  const dir = mkdtempSync(join(tmpdir(), 'tl-dbg-'));
  const dev = join(dir, 'charger'), side = join(dir, 'side');
  const socat = spawn('socat', [`pty,raw,echo=0,link=${dev}`, `pty,raw,echo=0,link=${side}`], { stdio: 'ignore' });
  while (!existsSync(dev) || !existsSync(side)) await new Promise((r) => setTimeout(r, 50));
  writeFileSync(join(dir, 'p.json'), JSON.stringify({ chemistry: 'li-ion', cells: 3 }));
  const serve = await startServe(['--station-port', dev, '--profile', join(dir, 'p.json')]);
  console.log(serve.output());
  const fd = openSync(side, 'r+');
  const b = await openBrowser();
  try {
    await b.page.goto(pageUrl(serve, 'feed'));
    await b.page.waitForTimeout(2000);
    writeSync(fd, 't=1 vbat=11.1 ibat=1\nt=2 vbat=eleven\n# hi\n');
    await b.page.waitForTimeout(2000);
    console.log(await b.page.locator('#view-feed').innerText());
    console.log(await b.page.locator('#view-rack').innerText());
    console.log(b.errors, serve.output());
  } finally { await b.close(); await serve.stop(); socat.kill(); }
})();
