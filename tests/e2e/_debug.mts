import { openBrowser } from './helpers/browser';
import { startServe, pageUrl } from './helpers/serve';
(async () => {
  const serve = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '120']);
  const b = await openBrowser();
  try {
    await b.page.goto(pageUrl(serve, 'rack'));
    await b.page.locator('#view-rack .tile').first().click();
    await b.page.waitForTimeout(3000);
    const canvas = b.page.locator('#view-bench canvas[role="img"]').first();
    const box = (await canvas.boundingBox())!;
    await b.page.mouse.click(box.x + box.width * 0.6, box.y + box.height / 2);
    await b.page.locator('#diagnose-here').click();
    await b.page.waitForTimeout(3000);
    console.log(await b.page.locator('#view-diagnosis').innerText());
    await b.page.screenshot({ path: '/tmp/tl/diag.png' });
    console.log(b.errors);
  } finally { await b.close(); await serve.stop(); }
})();
