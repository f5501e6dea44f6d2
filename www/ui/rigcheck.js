// Rig-check panel: shows the report of the crate's rig check (crate/src/rig.rs, `rigCheck` in
// crate/src/wasm.rs, the same JSON as `finwake check --json`): per foil, each check with its
// status (colour and text), value, thresholds and their source; the checks that need rig keys;
// the actuator loads and power with the sizing rules; and the cautions beside them.
//
// No physics here: every number comes from the report. Each readout has data-quantity = its key
// path in the report JSON (`water.density`, `checks.3.status`, `loads.0.heave_force.peak`) and
// data-value = the full-precision number; the text shows 4 significant figures.
//
// `panelModel(report)` is plain data (tested under node, tests/wasm/rigcheck.test.mjs);
// `renderRigCheck(root, report)` builds the DOM; `RigCheckPanel` adds a button that runs the check
// of the current case through a function the page supplies (a solver worker: the check runs the
// whole case). Styles: www/rigcheck.css.

/** The statuses of crate/src/rig.rs, as shown. */
export const STATUS = {
  usual_practice: { label: "usual practice", cls: "rig-usual" },
  caution: { label: "caution", cls: "rig-caution" },
  outside_model: { label: "outside what the model can predict", cls: "rig-outside" },
};

/** 4 significant figures without trailing zeros; exponent form for very large or small. */
export function sig4(v) {
  if (v === null || v === undefined) return "—";
  if (!Number.isFinite(v)) return String(v);
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(3).replace(/\.?0+e/, "e").replace("e+", "e");
  return String(Number(v.toPrecision(4)));
}

const LOAD_ROWS = [
  ["peak_relative_speed", "Peak speed relative to the water", "m/s"],
  ["heave_force.peak", "Heave force, peak", "N"],
  ["heave_force.rms", "Heave force, RMS", "N"],
  ["heave_force.hydrodynamic_peak", "  hydrodynamic peak (panel solution, with added mass)", "N"],
  ["heave_force.added_mass_peak", "  inside it: flat-plate added mass × peak acceleration", "N"],
  ["heave_force.inertia_peak", "  body inertia (moving mass)", "N"],
  ["pitch_torque.peak", "Pitch torque, peak", "N m"],
  ["pitch_torque.rms", "Pitch torque, RMS", "N m"],
  ["pitch_torque.hydrodynamic_peak", "  hydrodynamic peak (panel solution, with added inertia)", "N m"],
  ["pitch_torque.added_mass_peak", "  inside it: flat-plate added inertia × peak acceleration", "N m"],
  ["pitch_torque.inertia_peak", "  body inertia (pitch inertia)", "N m"],
  ["heave_power.peak", "Heave actuator power, peak", "W"],
  ["heave_power.mean", "Heave actuator power, mean", "W"],
  ["heave_power.regenerative_peak", "Heave actuator power, most negative (regenerative)", "W"],
  ["pitch_power.peak", "Pitch actuator power, peak", "W"],
  ["pitch_power.mean", "Pitch actuator power, mean", "W"],
  ["pitch_power.regenerative_peak", "Pitch actuator power, most negative (regenerative)", "W"],
  ["total_power.mean", "Both actuators, mean power", "W"],
  ["total_power.regenerative_mean", "Both actuators, mean of the negative part", "W"],
  ["load_cycles_per_hour", "Load cycles per hour", "1/h"],
];

function at(obj, path) {
  return path.split(".").reduce((o, k) => (o === null || o === undefined ? o : o[k]), obj);
}

/** The panel's content as plain data: what each readout shows and its key path. */
export function panelModel(report) {
  const w = report.water;
  const water = [
    ["density", "Density", "kg/m³"],
    ["kinematic_viscosity", "Kinematic viscosity", "m²/s"],
    ["vapour_pressure", "Vapour pressure", "Pa"],
  ].map(([k, label, unit]) => ({ quantity: `water.${k}`, label, unit, value: w[k], text: sig4(w[k]) }));
  const foils = report.loads.map((l, i) => ({
    foil: i,
    checks: report.checks
      .map((c, k) => ({ c, k }))
      .filter(({ c }) => c.foil === i)
      .map(({ c, k }) => ({
        quantity: `checks.${k}`,
        id: c.id,
        name: c.name,
        status: c.status,
        statusLabel: (STATUS[c.status] ?? { label: c.status }).label,
        cls: (STATUS[c.status] ?? { cls: "" }).cls,
        value: c.value,
        text: sig4(c.value),
        unit: c.unit === "-" ? "" : c.unit,
        limit: c.limit,
        source: c.source,
        message: c.message,
      })),
    skipped: report.skipped.filter((s) => s.foil === i).map((s) => ({ id: s.id, name: s.name, message: s.message })),
    loads: LOAD_ROWS.map(([key, label, unit]) => {
      const value = at(l, key);
      return { quantity: `loads.${i}.${key}`, label, unit, value, text: sig4(value) };
    }),
    sizing: l.sizing.map((s, k) => ({ quantity: `loads.${i}.sizing.${k}.value`, item: s.item, value: s.value, text: sig4(s.value), unit: s.unit, rule: s.rule, source: s.source })),
    notes: l.notes,
  }));
  return { water, waterSource: w.source, foils, cautions: report.cautions, worst: report.worst };
}

function el(tag, attrs = {}, ...children) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (k === "class") e.className = v;
    else if (k.startsWith("data-")) e.setAttribute(k, v);
    else e[k] = v;
  }
  for (const c of children) e.append(c);
  return e;
}

function readout(quantity, value, text) {
  return el("span", { class: "rig-value", "data-quantity": quantity, "data-value": String(value) }, text);
}

/** Replaces the contents of `root` with the report. */
export function renderRigCheck(root, report) {
  const m = panelModel(report);
  const parts = [];
  const water = el("p", { class: "rig-water" }, "Water: ");
  m.water.forEach((r, k) => {
    if (k > 0) water.append("; ");
    water.append(`${r.label.toLowerCase()} `, readout(r.quantity, r.value, r.text), ` ${r.unit}`);
  });
  water.append(el("span", { class: "rig-source" }, ` (${m.waterSource})`));
  parts.push(water);
  const worst = STATUS[m.worst] ?? { label: m.worst, cls: "" };
  parts.push(el("p", { class: `rig-worst ${worst.cls}`, "data-quantity": "worst", "data-value": m.worst }, `Worst status: ${worst.label}`));
  for (const f of m.foils) {
    parts.push(el("h3", {}, m.foils.length === 1 ? "Checks" : `Foil ${f.foil}: checks`));
    const table = el("table", { class: "rig-checks" });
    table.append(el("thead", {}, el("tr", {}, el("th", {}, "Status"), el("th", {}, "Check"), el("th", {}, "Value"), el("th", {}, "Thresholds and source"))));
    const body = el("tbody");
    for (const c of f.checks) {
      const status = el("td", { class: `rig-status ${c.cls}` }, el("span", { "data-quantity": `${c.quantity}.status`, "data-value": c.status }, c.statusLabel));
      const value = el("td", { class: "rig-num" }, readout(`${c.quantity}.value`, c.value, c.text), c.unit ? ` ${c.unit}` : "");
      const what = el("td", {}, c.name, el("div", { class: "rig-message", "data-quantity": `${c.quantity}.message` }, c.message));
      const limit = el("td", {}, el("div", { "data-quantity": `${c.quantity}.limit` }, c.limit), el("div", { class: "rig-source", "data-quantity": `${c.quantity}.source` }, `Source: ${c.source}`));
      body.append(el("tr", { "data-check": c.id }, status, what, value, limit));
    }
    for (const s of f.skipped) {
      body.append(el("tr", { class: "rig-skipped", "data-check": s.id }, el("td", { class: "rig-status" }, "not checked"), el("td", { colSpan: 3 }, `${s.name}: ${s.message}`)));
    }
    table.append(body);
    parts.push(table);

    parts.push(el("h3", {}, m.foils.length === 1 ? "Actuator loads and power" : `Foil ${f.foil}: actuator loads and power`));
    parts.push(el("p", { class: "rig-caution-text" }, m.cautions.loads));
    const loads = el("table", { class: "rig-loads" });
    for (const r of f.loads) {
      loads.append(el("tr", {}, el("td", {}, r.label), el("td", { class: "rig-num" }, readout(r.quantity, r.value, r.text), ` ${r.unit}`)));
    }
    parts.push(loads);
    const sizing = el("ul", { class: "rig-sizing" });
    for (const s of f.sizing) {
      sizing.append(el("li", {}, `${s.item}: `, readout(s.quantity, s.value, s.text), ` ${s.unit} (${s.rule}; ${s.source})`));
    }
    parts.push(el("p", {}, "Sizing rules of common practice:"), sizing);
    for (const n of f.notes) parts.push(el("p", { class: "rig-note" }, n));
  }
  parts.push(el("p", { class: "rig-safety", "data-quantity": "cautions.safety" }, m.cautions.safety));
  root.replaceChildren(...parts);
}

/**
 * The panel: a button that runs the rig check of the current case and shows it.
 * @param {HTMLElement} root
 * @param {() => object} currentCase  the case the page runs (case-file object)
 * @param {(caseJson: string) => Promise<object>} run  resolves to the report, rejects with the
 *   crate's CaseError ({ message, path, ... })
 */
export class RigCheckPanel {
  constructor(root, currentCase, run) {
    this.root = root;
    this.currentCase = currentCase;
    this.run = run;
    this.button = el("button", { type: "button", class: "rig-run" }, "Run the rig check");
    this.state = el("span", { class: "rig-state", "aria-live": "polite" }, "runs the whole case once (a few seconds)");
    this.out = el("div", { class: "rig-out" });
    root.replaceChildren(
      el("div", { class: "rig-bar" }, this.button, this.state),
      el("p", { class: "rig-safety" }, "Loads and power are 2D inviscid screening estimates, not design loads. Your lab's safety rules, local codes and licensed practice take precedence."),
      this.out,
    );
    this.button.addEventListener("click", () => this.start());
  }

  async start() {
    this.button.disabled = true;
    this.state.textContent = "running the check…";
    this.root.dataset.state = "running";
    try {
      const report = await this.run(JSON.stringify(this.currentCase()));
      renderRigCheck(this.out, report);
      const worst = STATUS[report.worst]?.label ?? report.worst;
      this.state.textContent = `done: worst status ${worst}`;
      this.root.dataset.state = "done";
    } catch (e) {
      this.state.textContent = `the check could not run: ${e?.message ?? e}`;
      this.root.dataset.state = "error";
    } finally {
      this.button.disabled = false;
    }
  }
}
