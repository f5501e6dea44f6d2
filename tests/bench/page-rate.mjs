// Benchmark helper for `cargo xtask bench`: opens the built site in headless Chromium, lets the
// default case run, and prints the page's own solver steps per second, frame rate and wake
// particle count as one JSON line, read from its status readouts after 12 s.
import { serve, browser, openReady } from "../browser/harness.mjs";

const server = await serve();
const b = await browser();
try {
  await openReady(b.page, server.origin);
  await b.page.waitForTimeout(12000);
  const stat = async (name) => Number(await b.page.getAttribute(`[data-stat="${name}"]`, "data-value"));
  const result = {
    steps_per_second: await stat("steps_per_second"),
    frame_rate: await stat("frame_rate"),
    heap_mb: await b.page.evaluate(() => (performance.memory ? performance.memory.usedJSHeapSize / 1e6 : null)),
  };
  console.log(JSON.stringify(result));
} finally {
  await b.close();
  await server.close();
}
