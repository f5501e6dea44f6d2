// Benchmark helper for `cargo xtask bench`: runs a case file to the end in the wasm build under
// node, FINWAKE_RUNS times (default 3), and prints the fastest wall time in seconds (one number
// on stdout).
import { readFileSync } from "node:fs";
import { join } from "node:path";

const PKG = process.env.FINWAKE_PKG;
const CASE = process.env.FINWAKE_CASE;
const m = await import(join(PKG, "finwake.js"));
await m.default({ module_or_path: readFileSync(join(PKG, "finwake_bg.wasm")) });
const text = readFileSync(CASE, "utf8");
let best = Infinity;
const runs = Number(process.env.FINWAKE_RUNS ?? 3);
for (let rep = 0; rep < runs; rep++) {
  const t0 = performance.now();
  const sim = new m.WasmSim(text);
  while (!sim.isFinished()) sim.advance(50);
  sim.summary();
  best = Math.min(best, (performance.now() - t0) / 1000);
  sim.free();
}
console.log(best.toFixed(4));
