// Benchmark helper for `cargo xtask bench`: runs a case file to the end in the wasm build under
// node and prints the fastest wall time in seconds. With FINWAKE_NATIVE (the native command
// line) it alternates: five times a native `finwake simulate CASE --json` (wall time of the
// process) and a wasm run, and prints the two fastest times, "native wasm" (one line). The wasm
// runs follow two untimed ones: V8 compiles wasm with its baseline compiler first and moves hot
// functions to its optimising compiler while they run, so the first runs in a fresh process are
// slower (0.83 to 1.17 s for the default case's 10 cycles here, against 0.56 to 0.64 s from the
// third run on), and the page's solver worker, which runs for long, sees the optimised code.
import { execFileSync } from "node:child_process";
import { readFileSync } from "node:fs";
import { join } from "node:path";

const PKG = process.env.FINWAKE_PKG;
const CASE = process.env.FINWAKE_CASE;
const NATIVE = process.env.FINWAKE_NATIVE;
const m = await import(join(PKG, "finwake.js"));
await m.default({ module_or_path: readFileSync(join(PKG, "finwake_bg.wasm")) });
const text = readFileSync(CASE, "utf8");

/** s, one wasm run of the case to its end. */
function wasmRun() {
  const t0 = performance.now();
  const sim = new m.WasmSim(text);
  while (!sim.isFinished()) sim.advance(50);
  sim.summary();
  sim.free();
  return (performance.now() - t0) / 1000;
}

/** s, one native run (the process's wall time, as a user runs it). */
function nativeRun() {
  const t0 = performance.now();
  execFileSync(NATIVE, ["simulate", CASE, "--json"], { stdio: ["ignore", "ignore", "inherit"] });
  return (performance.now() - t0) / 1000;
}

wasmRun();
wasmRun();
let wasm = Infinity, native = Infinity;
for (let rep = 0; rep < 5; rep++) {
  if (NATIVE) native = Math.min(native, nativeRun());
  wasm = Math.min(wasm, wasmRun());
}
console.log(NATIVE ? `${native.toFixed(4)} ${wasm.toFixed(4)}` : wasm.toFixed(4));
