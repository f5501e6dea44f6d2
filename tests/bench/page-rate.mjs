// Benchmark helper for `cargo xtask bench`: opens the built site in headless Chromium, lets the
// default case run at the fastest speed, and prints the page's own solver steps per second and
// frame rate (read from its status readouts once a second for 8 s; the median of the readings
// taken while the run was going) and the JS heap as one JSON line.
import { serve, browser, openReady } from "../browser/harness.mjs";

const server = await serve();
const b = await browser();
try {
  await openReady(b.page, server.origin);
  await b.page.selectOption('select[name="run.speed"]', "max");
  const stat = async (name) => Number(await b.page.getAttribute(`[data-stat="${name}"]`, "data-value"));
  const sps = [];
  const fps = [];
  for (let i = 0; i < 8; i++) {
    await b.page.waitForTimeout(1000);
    const state = await b.page.getAttribute("body", "data-run-state");
    if (state === "finished") break;
    sps.push(await stat("steps_per_second"));
    fps.push(await stat("frame_rate"));
  }
  const median = (v) => {
    const s = v.filter(Number.isFinite).sort((a, b) => a - b);
    return s.length ? s[Math.floor(s.length / 2)] : null;
  };
  const result = {
    steps_per_second: median(sps),
    frame_rate: median(fps),
    samples: sps.length,
    heap_mb: await b.page.evaluate(() => (performance.memory ? performance.memory.usedJSHeapSize / 1e6 : null)),
  };
  console.log(JSON.stringify(result));
} finally {
  await b.close();
  await server.close();
}
