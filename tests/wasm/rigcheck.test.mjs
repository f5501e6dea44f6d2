// The rig check through the wasm bindings (rigCheck in crate/src/wasm.rs) and the page panel's
// model of it (www/ui/rigcheck.js): every check of the report becomes a readout whose
// data-quantity key path leads back to the same number in the report, with its status in words,
// thresholds and source; the cautions are shown. Run through `cargo xtask test` (FINWAKE_PKG).
import { test } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { panelModel, sig4, STATUS } from "../../www/ui/rigcheck.js";

const PKG = process.env.FINWAKE_PKG;

function at(obj, path) {
  return path.split(".").reduce((o, k) => o[k], obj);
}

/** The shipped single-foil case with cheap numerics and every rig key. */
function rigCase() {
  const c = JSON.parse(readFileSync(new URL("../../cases/single-efficient.json", import.meta.url), "utf8"));
  c.numerics = { panels: 40, steps_per_cycle: 40, cycles: 3 };
  c.rig = { depth: 0.5, water_depth: 1.5, tank_width: 1.0 };
  c.foils[0].rig = { moving_mass: 2.0, pitch_inertia: 0.001 };
  return c;
}

test("sig4 shows four significant figures", () => {
  assert.equal(sig4(49810.7158), "49810");
  assert.equal(sig4(123456), "1.235e5");
  assert.equal(sig4(1.004e-6), "1.004e-6");
  assert.equal(sig4(0.21484), "0.2148");
  assert.equal(sig4(25), "25");
  assert.equal(sig4(null), "—");
});

test("the wasm rig check feeds the panel model", { skip: !PKG && "run through `cargo xtask test`" }, async () => {
  const m = await import(join(PKG, "finwake.js"));
  await m.default({ module_or_path: readFileSync(join(PKG, "finwake_bg.wasm")) });
  const report = JSON.parse(m.rigCheck(JSON.stringify(rigCase())));
  for (const k of ["density", "kinematic_viscosity", "vapour_pressure"]) assert.ok(report.water[k] > 0, `water.${k}`);
  // All ten checks: the tank keys are given.
  assert.equal(report.checks.length, 10);
  assert.equal(report.skipped.length, 0);
  const model = panelModel(report);
  for (const r of model.water) assert.equal(at(report, r.quantity), r.value);
  const rows = model.foils[0].checks;
  assert.equal(rows.length, report.checks.length);
  for (const r of rows) {
    const c = at(report, r.quantity);
    assert.equal(c.value, r.value, r.quantity);
    assert.equal(r.statusLabel, STATUS[c.status].label);
    assert.ok(r.limit.length > 0 && r.source.length > 0 && r.message.length > 0, r.id);
  }
  for (const r of model.foils[0].loads) assert.equal(at(report, r.quantity), r.value, r.quantity);
  assert.match(model.cautions.loads, /screening estimates .*not design loads/);
  assert.match(model.cautions.safety, /local codes and licensed practice/);

  // A bad rig key is the crate's CaseError naming the field.
  const bad = rigCase();
  bad.foils[0].rig.moving_mass = -1;
  assert.throws(() => m.rigCheck(JSON.stringify(bad)), (e) => e.name === "CaseError" && e.path === "foils.0.rig.moving_mass");
});
