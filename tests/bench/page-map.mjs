// Benchmark helper for `cargo xtask bench`: the 12 x 12 spacing-phase map of the default tandem
// case in the page (headless Chromium), the same grid as the command-line figure (gap 1 to 4
// fore chords, i.e. foils.1.x = 0.2 to 0.5 m, against the hind phase 0 to 330 deg), at the
// case's own numerics. The live run is paused first so that the map's workers have the cores.
// Prints one JSON line: seconds from Start to the last cell, cells, workers.
import { serve, browser } from "../browser/harness.mjs";

const server = await serve();
const b = await browser();
try {
  const page = b.page;
  await page.goto(`${server.origin}/#v1;foils=2;1.x=0.3;1.phase=90&map=foils.1.x:1:4:12,foils.1.phase:0:330:12,hind_thrust_ratio`);
  await page.waitForSelector("body[data-ready]", { timeout: 60000 });
  await page.click("#run-toggle");
  await page.waitForSelector('body[data-run-state="paused"]');
  const t0 = Date.now();
  await page.click("#map-start");
  await page.waitForSelector('#map-canvas[data-state="done"]', { timeout: 1800000 });
  const seconds = (Date.now() - t0) / 1000;
  const cells = Number(await page.getAttribute("#map-canvas", "data-cells"));
  const workers = await page.evaluate(() => navigator.hardwareConcurrency);
  console.log(JSON.stringify({ seconds, cells, workers, status: await page.textContent("#map-status") }));
} finally {
  await b.close();
  await server.close();
}
