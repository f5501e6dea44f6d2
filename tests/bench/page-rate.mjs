// Benchmark helper for `cargo xtask bench`: opens the built site in headless Chromium and prints
// one JSON line with the page's own solver steps per second and frame rate (read from its status
// readouts once a second, median of the readings taken while the run was going, at the fastest
// speed) and the JS heap:
// * `default`: the default case (its wake stays near 1,600 particles);
// * `wake_4000`: the default tandem run for 30 cycles through a link, measured once the wake has
//   reached the 4,000-particle cap, with the heap read at the start and end of that window.
import { serve, browser, openReady } from "../browser/harness.mjs";

async function measure(page, { minParticles = 0, seconds = 8 } = {}) {
  await page.selectOption('select[name="run.speed"]', "max");
  const stat = async (name) => Number(await page.getAttribute(`[data-stat="${name}"]`, "data-value"));
  if (minParticles > 0) {
    await page.waitForFunction(
      (n) => Number(document.querySelector('[data-stat="particles"]').dataset.value) >= n,
      minParticles,
      { timeout: 120000 },
    );
  }
  const heap = () => page.evaluate(() => (performance.memory ? performance.memory.usedJSHeapSize / 1e6 : null));
  const heapStart = await heap();
  const sps = [];
  const fps = [];
  let particles = 0;
  for (let i = 0; i < seconds; i++) {
    await page.waitForTimeout(1000);
    if ((await page.getAttribute("body", "data-run-state")) === "finished") break;
    sps.push(await stat("steps_per_second"));
    fps.push(await stat("frame_rate"));
    particles = await stat("particles");
  }
  const median = (v) => {
    const s = v.filter(Number.isFinite).sort((a, b) => a - b);
    return s.length ? s[Math.floor(s.length / 2)] : null;
  };
  return { steps_per_second: median(sps), frame_rate: median(fps), samples: sps.length, particles, heap_mb_start: heapStart, heap_mb_end: await heap() };
}

const server = await serve();
const b = await browser();
try {
  await openReady(b.page, server.origin);
  const first = await measure(b.page);
  await b.page.goto(`${server.origin}/#v1;foils=2;1.x=0.3;1.phase=90;cycles=30`);
  await b.page.waitForSelector("body[data-ready]", { timeout: 60000 });
  const wake = await measure(b.page, { minParticles: 4000, seconds: 10 });
  console.log(JSON.stringify({ steps_per_second: first.steps_per_second, frame_rate: first.frame_rate, default: first, wake_4000: wake }));
} finally {
  await b.close();
  await server.close();
}
