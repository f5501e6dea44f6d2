// The wasm build gives bit-identical step results to the native build.
//
// `cargo xtask test` runs the parity case natively (`xtask parity-native`, release build) and
// writes the exact f64 bit patterns of every step's time and loads, a hash of all wake particles
// after every step, and every particle after the last step. This test loads the optimised wasm
// package the site ships (wasm-opt -O3, simd128), runs the same case step by step under node, and
// demands the same bits everywhere: no tolerance, because the core is deterministic IEEE-754
// arithmetic on both targets.
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { join } from "node:path";

const PKG = process.env.FINWAKE_PKG;
const NATIVE = process.env.FINWAKE_PARITY_NATIVE;
const CASE = process.env.FINWAKE_PARITY_CASE;

const scratch = new DataView(new ArrayBuffer(8));
function hex(v) {
  scratch.setFloat64(0, v);
  return scratch.getBigUint64(0).toString(16).padStart(16, "0");
}
const MASK = (1n << 64n) - 1n;
function particleHash(p, n) {
  let h = 0xcbf29ce484222325n;
  for (let i = 0; i < 3 * n; i++) {
    scratch.setFloat64(0, p[i]);
    h ^= scratch.getBigUint64(0);
    h = (h * 0x100000001b3n) & MASK;
  }
  return h.toString(16).padStart(16, "0");
}

test("wasm steps are bit-identical to native steps", { skip: !PKG && "run through `cargo xtask test`" }, async () => {
  const native = JSON.parse(readFileSync(NATIVE, "utf8"));
  const m = await import(join(PKG, "finwake.js"));
  await m.default({ module_or_path: readFileSync(join(PKG, "finwake_bg.wasm")) });
  assert.deepEqual(m.loadFields(), native.load_fields, "loads layout differs between the wasm bindings and the native record");
  const stride = m.loadStride();
  const sim = new m.WasmSim(readFileSync(CASE, "utf8"));
  assert.equal(sim.foilCount(), native.foils);
  let mergedSeen = false;
  for (let s = 0; s < native.steps; s++) {
    const rec = sim.advance(1);
    assert.equal(rec.length, 1 + native.foils * stride, `step ${s + 1}: no step taken`);
    const want = native.per_step[s];
    assert.equal(hex(rec[0]), want.time, `step ${s + 1}: time differs`);
    for (let k = 0; k < native.foils * stride; k++) {
      if (hex(rec[1 + k]) !== want.loads[k]) {
        const foil = Math.floor(k / stride), fieldName = native.load_fields[k % stride];
        assert.fail(`step ${s + 1}, foil ${foil}, ${fieldName}: wasm ${rec[1 + k]} (${hex(rec[1 + k])}) vs native bits ${want.loads[k]}`);
      }
    }
    const p = sim.particles();
    const n = p.length / 3;
    assert.equal(n, want.particles, `step ${s + 1}: particle count differs`);
    assert.equal(particleHash(p, n), want.particle_hash, `step ${s + 1}: wake particles differ`);
    if (s > 0 && n < native.per_step[s - 1].particles) mergedSeen = true;
  }
  const p = sim.particles();
  const n = p.length / 3;
  const fin = native.final_particles;
  for (let i = 0; i < n; i++) {
    assert.equal(hex(p[i]), fin.x[i], `final particle ${i}: x differs`);
    assert.equal(hex(p[n + i]), fin.y[i], `final particle ${i}: y differs`);
    assert.equal(hex(p[2 * n + i]), fin.circulation[i], `final particle ${i}: circulation differs`);
  }
  // The summary crosses the boundary as a JS object: compare every number exactly.
  assert.deepEqual(sim.summary(), native.summary);
  console.log(`# parity: ${native.steps} steps of ${native.foils} foils, ${n} particles at the end, ` +
    `far-wake coarsening ${mergedSeen ? "exercised" : "not reached"}; native ${native.target} vs wasm32 identical`);
  sim.free();
});
