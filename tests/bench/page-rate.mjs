// Benchmark helper for `cargo xtask bench`: opens the built site in headless Chromium and prints
// one JSON line with the page's own solver steps per second (per second of the worker's computing,
// and per second of wall time) and frame rate (read from its status readouts once a second, median
// of the readings taken while the run was going, at the fastest speed; beside it the display's
// own rate, the animation callbacks per second, which the frame rate is to match) and the memory:
// * `default`: the default case run for 100 cycles through a link (its own 8 cycles end within
//   about a second at full speed, before the first reading; far-wake merging keeps the wake at
//   about 230 to 460 particles);
// * `wake_4000`: the default tandem run for 60 cycles with far-wake merging off (`merge=0`)
//   through a link, measured once the wake has grown to 4,000 particles. The step that passes
//   the cap merges the oldest particles down to nine tenths of it, so with the default cap of
//   4,000 the count would cycle between 3,600 and 4,000; the link sets the cap to 4,400
//   (`cap=4400`), so that the count stays between 3,960 and 4,400 while it is measured (60
//   cycles: at 300 steps/s a 40-cycle run ended within the ten-second window). The
//   readings' lowest and highest counts are reported with the rate;
// * `long_run`: the default tandem case for 200 cycles (20,000 steps), memory read after a
//   garbage collection at the start and the end of a long window: the page's JS heap and the
//   solver worker's WebAssembly memory (`body[data-solver-memory]`, bytes).
// Heap figures are read after a forced garbage collection (DevTools protocol).
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
  const cdp = await page.context().newCDPSession(page);
  const heap = async () => {
    await cdp.send("HeapProfiler.collectGarbage");
    return page.evaluate(() => (performance.memory ? performance.memory.usedJSHeapSize / 1e6 : null));
  };
  const solverMb = () => page.evaluate(() => Number(document.body.dataset.solverMemory ?? NaN) / 1e6);
  const solverStart = await solverMb();
  const heapStart = await heap();
  const sps = [];
  const wall = [];
  const fps = [];
  const display = [];
  let particles = 0;
  const counts = [];
  for (let i = 0; i < seconds; i++) {
    await page.waitForTimeout(1000);
    if ((await page.getAttribute("body", "data-run-state")) === "finished") break;
    sps.push(await stat("steps_per_second"));
    wall.push(Number(await page.getAttribute('[data-stat="steps_per_second"]', "data-wall")));
    fps.push(await stat("frame_rate"));
    display.push(Number(await page.getAttribute('[data-stat="frame_rate"]', "data-callbacks")));
    particles = await stat("particles");
    counts.push(particles);
  }
  const median = (v) => {
    const s = v.filter(Number.isFinite).sort((a, b) => a - b);
    return s.length ? s[Math.floor(s.length / 2)] : null;
  };
  const stepsEnd = await stat("step");
  return {
    steps_per_second: median(sps), wall_steps_per_second: median(wall), frame_rate: median(fps), display_rate: median(display), samples: sps.length, particles, particles_low: Math.min(...counts), particles_high: Math.max(...counts), steps: stepsEnd,
    heap_mb_start: heapStart, heap_mb_end: await heap(), solver_mb_start: solverStart, solver_mb_end: await solverMb(),
  };
}

const server = await serve();
const b = await browser();
try {
  await openReady(b.page, server.origin);
  // The default tandem case with `extra` link keys.
  const openTandem = async (extra) => {
    await b.page.goto(`${server.origin}/#v1;foils=2;1.x=0.3;1.phase=90;${extra}`);
    await b.page.waitForSelector("body[data-ready]", { timeout: 60000 });
  };
  await openTandem("cycles=100");
  const first = await measure(b.page);
  await openTandem("cycles=60;merge=0;cap=4400");
  const wake = await measure(b.page, { minParticles: 4000, seconds: 10 });
  await openTandem("cycles=200");
  await b.page.waitForTimeout(3000);
  const long = await measure(b.page, { seconds: 40 });
  console.log(JSON.stringify({ steps_per_second: first.steps_per_second, frame_rate: first.frame_rate, default: first, wake_4000: wake, long_run: long }));
} finally {
  await b.close();
  await server.close();
}
