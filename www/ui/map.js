// Spacing-phase maps: two case keys over a grid (default: the gap in fore chords against the hind
// foil's phase), every cell run as `finwake simulate` runs that configuration, in a pool of Web
// Workers (map-worker.js, one per core, 1 to 8). A progress bar with the time left, Cancel, a heat
// map of the chosen quantity with labelled axes, a colour bar, the contour where a ratio is 1 and
// the line of constant wake phase; hover shows the cell's values, a click loads that
// configuration into the live view; CSV and PNG export. The settings (never the results) travel
// in the shareable link as a `&map=` part after the case (see DEVELOPERS.md).
//
// Ratios are to an isolated foil with the same motion (the hind foil alone, phase 0, at the
// origin; as crate/src/sweep.rs `isolated` does), run once per distinct motion.
//
// Test hooks: controls `map.x.key|start|stop|count`, `map.y.*`, `map.quantity`; the canvas
// `#map-canvas` has data-state (idle, running, done, cancelled, error), data-cells (finished
// cells) and data-total; the hover readout `#map-readout` has data-x, data-y, data-value and
// data-map-quantity children with data-value at full precision.
import { PageState } from "../state.js";
import { niceStep } from "../render/canvas.js";
import { download } from "./files.js";

/** Keys a map axis can vary: id = case key path; value in `unit` (gap and offset in chords of the
 * fore foil, as the page's controls show them). `min`/`max` bound what the map accepts. */
export const MAP_KEYS = [
  { key: "foils.1.x", label: "Gap (fore TE to hind LE)", short: "gap", unit: "c", min: 0, max: 20 },
  { key: "foils.1.phase", label: "Hind phase lag φ", short: "phase", unit: "deg", min: -720, max: 720 },
  { key: "foils.1.y", label: "Vertical offset of the hind LE", short: "offset", unit: "c", min: -10, max: 10 },
  { key: "frequency", label: "Frequency f", short: "f", unit: "Hz", min: 0.01, max: 20 },
  { key: "flow.speed", label: "Flow speed U", short: "U", unit: "m/s", min: 0.01, max: 20 },
  { key: "foils.1.pitch_lead", label: "Hind pitch lead ψ", short: "lead", unit: "deg", min: -360, max: 360 },
];

/** Quantities the map can show; `ratio` ones use the diverging palette centred at 1. */
export const MAP_QUANTITIES = [
  { id: "hind_thrust_ratio", label: "Hind thrust ratio T₁ / T alone", unit: "–", ratio: true, get: (c) => c.thrustRatio },
  { id: "hind_efficiency_ratio", label: "Hind efficiency ratio η₁ / η alone", unit: "–", ratio: true, get: (c) => c.efficiencyRatio },
  { id: "pair_thrust", label: "Pair thrust T₀ + T₁", unit: "N", get: (c) => c.summary?.total.thrust },
  { id: "pair_thrust_coefficient", label: "Pair thrust coefficient", unit: "C_T", get: (c) => c.summary?.total.thrust_coefficient },
  { id: "pair_efficiency", label: "Pair propulsive efficiency", unit: "–", get: (c) => c.summary?.total.efficiency },
  { id: "pair_power", label: "Pair input power", unit: "W", get: (c) => c.summary?.total.power },
  { id: "hind_thrust", label: "Hind thrust T₁", unit: "N", get: (c) => c.summary?.foils[1].thrust },
];

export const MAP_DEFAULTS = {
  x: { key: "foils.1.x", start: 0.5, stop: 3, count: 6 },
  y: { key: "foils.1.phase", start: 0, stop: 330, count: 12 },
  quantity: "hind_thrust_ratio",
};
/** Values per axis (so a map has at most 1,600 cells). */
export const MAX_COUNT = 40;
const MAX_WORKERS = 8;

// ---------------------------------------------------------------------------------------------
// Palettes. Interpolated in CIELAB (D65) between our own anchor colours, so lightness changes
// linearly along each leg; a blue-to-orange diverging pair through a light neutral keeps its two
// sides apart for the common red-green colour-vision deficiencies (common practice).

const DIVERGING = ["#1f4f8f", "#f3f0ea", "#8f3c0c"]; // below 1, at 1, above 1
const SEQUENTIAL = ["#1d1f4b", "#2d6f86", "#7fb07a", "#f1e7a6"]; // low to high, lightness rising

function srgbToLinear(c) { return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4; }
function linearToSrgb(c) { return c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055; }
const WHITE = [0.95047, 1, 1.08883];
const f = (t) => (t > 216 / 24389 ? Math.cbrt(t) : (24389 / 27 * t + 16) / 116);
const fi = (t) => (t ** 3 > 216 / 24389 ? t ** 3 : (116 * t - 16) / (24389 / 27));

/** `#rrggbb` -> [L, a, b]. */
export function hexToLab(hex) {
  const [r, g, b] = [1, 3, 5].map((i) => srgbToLinear(parseInt(hex.slice(i, i + 2), 16) / 255));
  const x = (0.4124564 * r + 0.3575761 * g + 0.1804375 * b) / WHITE[0];
  const y = (0.2126729 * r + 0.7151522 * g + 0.072175 * b) / WHITE[1];
  const z = (0.0193339 * r + 0.119192 * g + 0.9503041 * b) / WHITE[2];
  return [116 * f(y) - 16, 500 * (f(x) - f(y)), 200 * (f(y) - f(z))];
}

/** [L, a, b] -> [r, g, b] (0-255, clamped). */
export function labToRgb([L, A, B]) {
  const fy = (L + 16) / 116;
  const x = fi(fy + A / 500) * WHITE[0];
  const y = fi(fy) * WHITE[1];
  const z = fi(fy - B / 200) * WHITE[2];
  const r = 3.2404542 * x - 1.5371385 * y - 0.4985314 * z;
  const g = -0.969266 * x + 1.8760108 * y + 0.041556 * z;
  const b = 0.0556434 * x - 0.2040259 * y + 1.0572252 * z;
  return [r, g, b].map((c) => Math.round(255 * Math.min(1, Math.max(0, linearToSrgb(c)))));
}

function ramp(anchors) {
  const labs = anchors.map(hexToLab);
  return (t) => {
    const u = Math.min(1, Math.max(0, t)) * (labs.length - 1);
    const i = Math.min(labs.length - 2, Math.floor(u));
    const w = u - i;
    return labToRgb(labs[i].map((v, k) => v + (labs[i + 1][k] - v) * w));
  };
}

/** t in [0, 1] -> [r, g, b]; 0.5 is the neutral (a ratio of 1). */
export const diverging = ramp(DIVERGING);
/** t in [0, 1] -> [r, g, b], dark to light. */
export const sequential = ramp(SEQUENTIAL);

// ---------------------------------------------------------------------------------------------
// Settings: validation shared by the controls and the link.

/** User text as shown in a message: shortened, without control or direction-override characters. */
const shown = (text) => {
  const s = String(text);
  return (s.length > 40 ? `${s.slice(0, 40)}…` : s).replace(/[\u0000-\u001f\u007f\u202a-\u202e\u2066-\u2069]/g, "?");
};

const num = (s) => (typeof s === "string" && /^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$/.test(s) ? Number(s) : NaN);

/** Checks one axis given as text; returns { axis } or { error } naming the field, value and range. */
export function checkAxis(name, { key, start, stop, count }) {
  const spec = MAP_KEYS.find((k) => k.key === key);
  if (!spec) return { error: `map.${name}.key: “${shown(key)}” is not a key the map varies; allowed: ${MAP_KEYS.map((k) => k.key).join(", ")}` };
  const out = { key };
  for (const [field, text] of [["start", start], ["stop", stop]]) {
    const v = num(String(text));
    if (!Number.isFinite(v) || v < spec.min || v > spec.max) {
      return { error: `map.${name}.${field}: “${shown(text)}” is not allowed; give a number from ${spec.min} to ${spec.max} ${spec.unit}` };
    }
    out[field] = v;
  }
  const n = num(String(count));
  if (!Number.isInteger(n) || n < 1 || n > MAX_COUNT) return { error: `map.${name}.count: “${shown(count)}” is not allowed; give a whole number from 1 to ${MAX_COUNT}` };
  if (n === 1 && out.start !== out.stop) return { error: `map.${name}.count: with 1 value, start (${out.start}) and stop (${out.stop}) must be equal` };
  out.count = n;
  return { axis: out };
}

/** The axis values, evenly spaced, both ends included (as crate/src/sweep.rs Axis::values). */
export function axisValues(a) {
  if (a.count === 1) return [a.start];
  return Array.from({ length: a.count }, (_, i) => a.start + ((a.stop - a.start) * i) / (a.count - 1));
}

/** The `map=` part of a link for `settings`, or "" for the defaults. */
export function mapFragment(s) {
  const ax = (a) => `${a.key}:${a.start}:${a.stop}:${a.count}`;
  const text = `${ax(s.x)},${ax(s.y)},${s.quantity}`;
  const d = MAP_DEFAULTS;
  return text === `${ax(d.x)},${ax(d.y)},${d.quantity}` ? "" : `map=${text}`;
}

/** Reads a `map=` part strictly: every field it cannot use is reset to its default and listed. */
export function parseMapFragment(text) {
  const settings = structuredClone(MAP_DEFAULTS);
  const notes = [];
  const clip = shown;
  let raw;
  try {
    raw = decodeURIComponent(text);
  } catch {
    raw = text;
  }
  const parts = raw.split(",");
  if (parts.length !== 3) {
    notes.push(`map: “${clip(raw)}” has ${parts.length} parts, not 3 (X axis, Y axis, quantity): the map settings are at their defaults`);
    return { settings, notes };
  }
  ["x", "y"].forEach((name, i) => {
    const f4 = parts[i].split(":");
    if (f4.length !== 4) {
      notes.push(`map.${name}: “${clip(parts[i])}” is not KEY:START:STOP:COUNT: reset to ${MAP_DEFAULTS[name].key} ${MAP_DEFAULTS[name].start} to ${MAP_DEFAULTS[name].stop}, ${MAP_DEFAULTS[name].count} values`);
      return;
    }
    const r = checkAxis(name, { key: f4[0], start: f4[1], stop: f4[2], count: f4[3] });
    if (r.error) notes.push(`${r.error}: the ${name.toUpperCase()} axis is reset to its default`);
    else settings[name] = r.axis;
  });
  if (settings.x.key === settings.y.key) {
    notes.push(`map.y.key: both axes vary ${settings.y.key}: the axes are reset to their defaults`);
    settings.x = structuredClone(MAP_DEFAULTS.x);
    settings.y = structuredClone(MAP_DEFAULTS.y);
  }
  if (MAP_QUANTITIES.some((q) => q.id === parts[2])) settings.quantity = parts[2];
  else notes.push(`map.quantity: “${clip(parts[2])}” is not a quantity of the map; allowed: ${MAP_QUANTITIES.map((q) => q.id).join(", ")}: reset to ${MAP_DEFAULTS.quantity}`);
  return { settings, notes };
}

/** m. Trailing-edge x of a foil at its mean pose (as state.js and crate/src/kinematics.rs). */
function trailingEdgeX(foil) {
  return foil.x + foil.chord * Math.cos((foil.pitch_mean * Math.PI) / 180);
}

/** A copy of `base` with map key `key` set to `value` (gap and offset in fore chords). */
export function withKey(base, key, value) {
  const c = structuredClone(base);
  const fore = c.foils[0];
  if (key === "foils.1.x") c.foils[1].x = trailingEdgeX(fore) + value * fore.chord;
  else if (key === "foils.1.y") c.foils[1].y = fore.y + value * fore.chord;
  else {
    const parts = key.split(".");
    let o = c;
    for (const p of parts.slice(0, -1)) o = o[p];
    o[parts[parts.length - 1]] = value;
  }
  return c;
}

// ---------------------------------------------------------------------------------------------

const el = (tag, props = {}, ...kids) => {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(props)) {
    if (k === "dataset") Object.assign(e.dataset, v);
    else if (k in e) e[k] = v;
    else e.setAttribute(k, v);
  }
  e.append(...kids);
  return e;
};

const fmt = (v, digits = 4) => (v === null || v === undefined || !Number.isFinite(v) ? "—" : Number(v.toPrecision(digits)).toString());

export class MapView {
  /**
   * @param {{root: HTMLElement, getCase: () => object, loadCase: (c: object, label: string) => void,
   *          notices: import("./notices.js").Notices}} opts
   *   getCase: the live view's current case; loadCase: opens a case in the live view.
   */
  constructor({ root, getCase, loadCase, notices }) {
    this.getCase = getCase;
    this.loadCase = loadCase;
    this.notices = notices;
    this.workers = [];
    this.map = null; // { settings, xs, ys, cells, base, started, done, total }
    this.build(root);
    this.applySettings(this.settingsFromAddress() ?? MAP_DEFAULTS);
    window.addEventListener("hashchange", () => {
      const s = this.settingsFromAddress();
      if (s) this.applySettings(s);
    });
    this.setState("idle");
    this.draw();
  }

  build(root) {
    root.append(el("h2", {}, "Spacing-phase map"));
    root.append(el("p", { className: "caveat" }, "Each cell is a full run of the case in the live view with the two keys set (the same numbers as `finwake simulate` on that configuration): 2D inviscid screening estimates, not rig loads. Coarser numerics make a map faster."));
    const form = el("div", { className: "map-form" });
    this.inputs = {};
    for (const name of ["x", "y"]) {
      const sel = el("select", { name: `map.${name}.key`, id: `map-${name}-key` });
      for (const k of MAP_KEYS) sel.append(new Option(`${k.label} (${k.unit})`, k.key));
      const field = (f, label, size) => {
        const i = el("input", { type: "text", name: `map.${name}.${f}`, id: `map-${name}-${f}`, size, autocomplete: "off", inputMode: "decimal" });
        return [el("label", { htmlFor: i.id }, label), i];
      };
      const start = field("start", "from", 6);
      const stop = field("stop", "to", 6);
      const count = field("count", "values", 3);
      this.inputs[name] = { key: sel, start: start[1], stop: stop[1], count: count[1] };
      form.append(el("div", { className: "map-axis" }, el("label", { htmlFor: sel.id, className: "map-axis-name" }, name === "x" ? "X axis" : "Y axis"), sel, ...start, ...stop, ...count));
      sel.addEventListener("change", () => this.keyChanged(name));
    }
    this.quantity = el("select", { name: "map.quantity", id: "map-quantity" });
    for (const q of MAP_QUANTITIES) this.quantity.append(new Option(`${q.label} (${q.unit})`, q.id));
    this.quantity.addEventListener("change", () => this.draw());
    this.startButton = el("button", { type: "button", id: "map-start" }, "Compute map");
    this.cancelButton = el("button", { type: "button", id: "map-cancel", disabled: true }, "Cancel");
    this.csvButton = el("button", { type: "button", id: "map-csv", disabled: true }, "Export CSV");
    this.pngButton = el("button", { type: "button", id: "map-png", disabled: true }, "Export PNG");
    form.append(el("div", { className: "map-axis" }, el("label", { htmlFor: "map-quantity", className: "map-axis-name" }, "Show"), this.quantity));
    form.append(el("div", { className: "map-tools" }, this.startButton, this.cancelButton, this.csvButton, this.pngButton));
    root.append(form);
    this.progress = el("progress", { id: "map-progress", max: 1, value: 0 });
    this.status = el("span", { id: "map-status", className: "map-status", role: "status" });
    root.append(el("div", { className: "map-progress" }, this.progress, this.status));
    this.canvas = el("canvas", { id: "map-canvas", className: "map-canvas", tabIndex: 0, "aria-label": "Heat map: hover or use the arrow keys for a cell's values; click or press Enter to load it into the live view" });
    root.append(this.canvas);
    this.readout = el("p", { id: "map-readout", className: "map-readout", role: "status" }, "Hover over a cell for its values; click it to load that configuration into the live view.");
    root.append(this.readout);
    this.legend = el("p", { id: "map-legend", className: "map-legend" });
    root.append(this.legend);

    this.startButton.addEventListener("click", () => this.start());
    this.cancelButton.addEventListener("click", () => this.cancel());
    this.csvButton.addEventListener("click", () => this.exportCsv());
    this.pngButton.addEventListener("click", () => this.exportPng());
    this.canvas.addEventListener("mousemove", (e) => this.hover(e));
    this.canvas.addEventListener("click", (e) => this.click(e));
    this.canvas.addEventListener("keydown", (e) => this.key(e));
    new ResizeObserver(() => this.draw()).observe(this.canvas);
  }

  keyChanged(name) {
    // A new key starts from a sensible range of its own.
    const key = this.inputs[name].key.value;
    const spec = MAP_KEYS.find((k) => k.key === key);
    const d = Object.values(MAP_DEFAULTS).find((a) => a.key === key);
    const base = this.getCase?.();
    let lo = spec.min, hi = spec.max;
    if (d) { lo = d.start; hi = d.stop; } else if (base) {
      const v = key === "foils.1.y" ? 0 : key.split(".").reduce((o, k) => o?.[k], base);
      if (Number.isFinite(v)) { lo = Number((v * 0.5).toPrecision(3)); hi = Number((v * 1.5).toPrecision(3)); }
    }
    this.inputs[name].start.value = String(lo);
    this.inputs[name].stop.value = String(hi);
  }

  applySettings(s) {
    for (const name of ["x", "y"]) {
      const i = this.inputs[name];
      i.key.value = s[name].key;
      i.start.value = String(s[name].start);
      i.stop.value = String(s[name].stop);
      i.count.value = String(s[name].count);
    }
    this.quantity.value = s.quantity;
  }

  /** The map settings in the address (`&map=...`), or null; lists in a notice what it ignored. */
  settingsFromAddress() {
    const m = /(?:^#|&)map=([^&]*)/.exec(location.hash);
    if (!m) return null;
    const { settings, notes } = parseMapFragment(m[1]);
    if (notes.length > 0) {
      this.notices.show("map-link", {
        kind: "warn",
        title: `The link's map settings opened, but ${notes.length === 1 ? "one field was" : `${notes.length} fields were`} not used (reset to the default):`,
        lines: notes,
      });
    } else this.notices.clear("map-link");
    return settings;
  }

  /** The settings in the controls, checked: { settings } or { error }. */
  readSettings() {
    const s = { quantity: this.quantity.value };
    for (const name of ["x", "y"]) {
      const i = this.inputs[name];
      const r = checkAxis(name, { key: i.key.value, start: i.start.value, stop: i.stop.value, count: i.count.value });
      if (r.error) return { error: r.error };
      s[name] = r.axis;
    }
    if (s.x.key === s.y.key) return { error: `map.y.key: both axes vary ${s.x.key}; choose two different keys` };
    return { settings: s };
  }

  /** The `map=` part for the shareable link ("" for the default settings or bad ones). */
  fragment() {
    const r = this.readSettings();
    return r.settings ? mapFragment(r.settings) : "";
  }

  setState(s, text) {
    this.canvas.dataset.state = s;
    if (text !== undefined) this.status.textContent = text;
    const running = s === "running";
    this.startButton.disabled = running;
    this.cancelButton.disabled = !running;
    const any = this.map && this.map.done > 0;
    this.csvButton.disabled = running || !any;
    this.pngButton.disabled = running || !any;
  }

  start() {
    const r = this.readSettings();
    if (r.error) { this.setState("error", `The map did not start: ${r.error}`); return; }
    const base = this.getCase();
    if (!base || base.foils.length < 2) { this.setState("error", "The map did not start: the live view's case has one foil; add a hind foil first (the map varies the hind foil)."); return; }
    const s = r.settings;
    const xs = axisValues(s.x);
    const ys = axisValues(s.y);
    const cells = [];
    const jobs = [];
    const baselines = new Map(); // motion key -> baseline record
    for (let j = 0; j < ys.length; j++) {
      for (let i = 0; i < xs.length; i++) {
        const c = withKey(withKey(base, s.x.key, xs[i]), s.y.key, ys[j]);
        const iso = JSON.stringify(PageState.singleFoilCase(c, 1));
        if (!baselines.has(iso)) {
          const b = { kind: "baseline", caseJson: iso, summary: null, error: null, cells: [] };
          baselines.set(iso, b);
          jobs.push(b);
        }
        const cell = { kind: "cell", i, j, x: xs[i], y: ys[j], case: c, caseJson: JSON.stringify(c), summary: null, error: null, baseline: baselines.get(iso), finished: false };
        baselines.get(iso).cells.push(cell);
        cells.push(cell);
        jobs.push(cell);
      }
    }
    this.stopWorkers();
    this.map = { settings: s, xs, ys, cells, jobs, next: 0, done: 0, finishedJobs: 0, total: jobs.length, started: performance.now(), failed: 0 };
    this.canvas.dataset.cells = "0";
    this.canvas.dataset.total = String(cells.length);
    this.progress.max = jobs.length;
    this.progress.value = 0;
    const n = Math.min(MAX_WORKERS, Math.max(1, navigator.hardwareConcurrency || 1), jobs.length);
    this.setState("running", `Starting ${n} worker${n === 1 ? "" : "s"} for ${cells.length} cells and ${baselines.size} isolated-foil baseline${baselines.size === 1 ? "" : "s"}…`);
    for (let k = 0; k < n; k++) this.spawn(this.map);
    this.draw();
  }

  spawn(map) {
    let w;
    try {
      w = new Worker(new URL("../map-worker.js", import.meta.url), { type: "module", name: `map ${this.workers.length}` });
    } catch (e) {
      this.fail(`The map workers could not be created: ${e.message}. Maps need a browser with module Web Workers.`);
      return;
    }
    const slot = { worker: w, job: null };
    this.workers.push(slot);
    w.addEventListener("message", (ev) => this.onWorker(map, slot, ev.data));
    w.addEventListener("error", (ev) => {
      ev.preventDefault();
      const where = ev.filename ? ` (${ev.filename}:${ev.lineno})` : " (map-worker.js)";
      this.fail(`A map worker stopped with an error: ${ev.message || "its script did not load"}${where}.`);
    });
    w.addEventListener("messageerror", () => this.fail("A map worker sent a message the page could not read."));
    w.postMessage({ type: "init" });
  }

  feed(map, slot) {
    if (map !== this.map || map.next >= map.jobs.length) { slot.job = null; return; }
    const job = map.jobs[map.next];
    map.next += 1;
    slot.job = job;
    job.id = map.next;
    slot.worker.postMessage({ type: "run", id: job.id, caseJson: job.caseJson });
  }

  onWorker(map, slot, msg) {
    if (map !== this.map) return;
    if (msg.type === "fatal") { this.fail(msg.message); return; }
    if (msg.type === "ready") { this.feed(map, slot); return; }
    const job = slot.job;
    if (!job || job.id !== msg.id) return;
    if (msg.type === "cell") job.summary = msg.summary;
    else if (msg.type === "cell-error") job.error = msg.error.message;
    map.finishedJobs += 1;
    if (job.kind === "baseline") {
      for (const c of job.cells) if (c.finished) this.ratios(c);
    } else {
      job.finished = true;
      map.done += 1;
      if (job.error) map.failed += 1;
      if (job.baseline.summary || job.baseline.error) this.ratios(job);
      this.canvas.dataset.cells = String(map.done);
    }
    this.feed(map, slot);
    this.progress.value = map.finishedJobs;
    const elapsed = (performance.now() - map.started) / 1000;
    if (map.finishedJobs === map.total) {
      this.stopWorkers();
      const bad = map.failed > 0 ? ` ${map.failed} cell${map.failed === 1 ? "" : "s"} could not run (hover for why); first: ${map.cells.find((c) => c.error).error}` : "";
      this.setState("done", `Done: ${map.cells.length} cells in ${elapsed.toFixed(1)} s on ${this.lastWorkers} worker${this.lastWorkers === 1 ? "" : "s"}.${bad}`);
    } else {
      const left = (elapsed / map.finishedJobs) * (map.total - map.finishedJobs);
      this.status.textContent = `${map.done} of ${map.cells.length} cells (${map.finishedJobs} of ${map.total} runs with the baselines), ${elapsed.toFixed(0)} s so far, about ${left.toFixed(0)} s left`;
    }
    this.draw();
  }

  ratios(cell) {
    const b = cell.baseline.summary?.foils[0];
    const h = cell.summary?.foils[1];
    cell.thrustRatio = b && h && b.thrust !== 0 ? h.thrust / b.thrust : null;
    cell.efficiencyRatio = b && h && h.efficiency != null && b.efficiency != null && b.efficiency > 0 ? h.efficiency / b.efficiency : null;
  }

  stopWorkers() {
    this.lastWorkers = this.workers.length;
    for (const s of this.workers) s.worker.terminate();
    this.workers = [];
  }

  cancel() {
    if (!this.map || this.canvas.dataset.state !== "running") return;
    this.stopWorkers();
    const m = this.map;
    this.setState("cancelled", `Cancelled: ${m.done} of ${m.cells.length} cells finished (they stay on the map and in the CSV).`);
    this.draw();
  }

  fail(text) {
    if (this.canvas.dataset.state !== "running") return;
    this.stopWorkers();
    this.setState("error", `The map stopped: ${text}`);
    this.draw();
  }

  quantitySpec() {
    return MAP_QUANTITIES.find((q) => q.id === this.quantity.value) ?? MAP_QUANTITIES[0];
  }

  // ------------------------------------------------------------------------------------------
  // Drawing.

  layout() {
    const w = this.canvas.getBoundingClientRect().width;
    const h = this.canvas.getBoundingClientRect().height;
    return { w, h, left: 64, right: w - 104, top: 16, bottom: h - 48 };
  }

  draw() {
    const dpr = window.devicePixelRatio || 1;
    const rect = this.canvas.getBoundingClientRect();
    const W = Math.max(1, Math.round(rect.width * dpr));
    const H = Math.max(1, Math.round(rect.height * dpr));
    if (this.canvas.width !== W || this.canvas.height !== H) { this.canvas.width = W; this.canvas.height = H; }
    const ctx = this.canvas.getContext("2d");
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.fillStyle = "#ffffff";
    ctx.fillRect(0, 0, W, H);
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    const L = this.layout();
    ctx.font = "12px system-ui, sans-serif";
    ctx.fillStyle = "#5d6673";
    if (!this.map) {
      ctx.fillText("Choose the axes and press “Compute map”.", L.left, L.top + 20);
      return;
    }
    const m = this.map;
    const q = this.quantitySpec();
    const vals = m.cells.map((c) => (c.finished ? q.get(c) : undefined));
    const finite = vals.filter((v) => v !== null && v !== undefined && Number.isFinite(v));
    let lo = Math.min(...finite), hi = Math.max(...finite);
    if (q.ratio) {
      const half = Math.max(1e-9, ...finite.map((v) => Math.abs(v - 1)));
      lo = 1 - half; hi = 1 + half;
    } else if (!(hi > lo)) { lo -= 0.5 * Math.abs(lo || 1); hi += 0.5 * Math.abs(hi || 1); }
    const colour = (v) => {
      const t = (v - lo) / (hi - lo);
      return q.ratio ? diverging(t) : sequential(t);
    };
    const nx = m.xs.length, ny = m.ys.length;
    const cw = (L.right - L.left) / nx, ch = (L.bottom - L.top) / ny;
    m.cells.forEach((c, k) => {
      const x = L.left + c.i * cw, y = L.bottom - (c.j + 1) * ch;
      const v = vals[k];
      if (!c.finished) { ctx.fillStyle = "#ece9e2"; ctx.fillRect(x, y, cw, ch); return; }
      if (v === null || v === undefined || !Number.isFinite(v)) {
        ctx.fillStyle = "#bdb8ae"; ctx.fillRect(x, y, cw, ch);
        ctx.strokeStyle = "#8b857a"; ctx.beginPath(); ctx.moveTo(x, y); ctx.lineTo(x + cw, y + ch); ctx.stroke();
        return;
      }
      const [r, g, b] = colour(v);
      ctx.fillStyle = `rgb(${r},${g},${b})`;
      ctx.fillRect(x, y, cw + 0.5, ch + 0.5);
    });
    // Cell centres in canvas coordinates.
    const cx = (i) => L.left + (i + 0.5) * cw;
    const cy = (j) => L.bottom - (j + 0.5) * ch;
    if (q.ratio) this.contourOne(ctx, vals, nx, ny, cx, cy);
    this.wakePhaseLine(ctx, m, vals, finite, L, cx, cy);
    this.axes(ctx, m, L, cw, ch);
    this.colourBar(ctx, q, lo, hi, L);
    const notes = ["Grey cells: no value (not run yet, or the configuration cannot run; hover for why)."];
    if (q.ratio) notes.unshift("Solid black line: where the ratio is 1 (the hind foil does as well as alone).");
    if (this.wakeSlope != null) notes.push(`Dashed line: constant wake phase, φ − ${fmt(this.wakeSlope, 3)}° per chord of gap (360° f c / U) = const, drawn through the cell with the largest value.`);
    this.legend.textContent = notes.join(" ");
  }

  /** The contour where the ratio is 1 (marching squares over the cell centres, linear). */
  contourOne(ctx, vals, nx, ny, cx, cy) {
    const v = (i, j) => vals[j * nx + i];
    ctx.save();
    ctx.strokeStyle = "#111111";
    ctx.lineWidth = 2;
    ctx.setLineDash([]);
    ctx.beginPath();
    for (let j = 0; j + 1 < ny; j++) {
      for (let i = 0; i + 1 < nx; i++) {
        const corners = [[i, j], [i + 1, j], [i + 1, j + 1], [i, j + 1]];
        const cv = corners.map(([a, b]) => v(a, b));
        if (cv.some((x) => x === null || x === undefined || !Number.isFinite(x))) continue;
        const pts = [];
        for (let e = 0; e < 4; e++) {
          const a = cv[e] - 1, b = cv[(e + 1) % 4] - 1;
          if ((a < 0) !== (b < 0)) {
            const t = a / (a - b);
            const [i0, j0] = corners[e], [i1, j1] = corners[(e + 1) % 4];
            pts.push([cx(i0) + (cx(i1) - cx(i0)) * t, cy(j0) + (cy(j1) - cy(j0)) * t]);
          }
        }
        for (let p = 0; p + 1 < pts.length; p += 2) { ctx.moveTo(...pts[p]); ctx.lineTo(...pts[p + 1]); }
      }
    }
    ctx.stroke();
    ctx.restore();
  }

  /** Over a gap-phase map: the line of constant wake phase, phase - 360 f c g / U = const, through
   * the cell with the largest value (slope 360 deg x f x c / U per chord of gap). */
  wakePhaseLine(ctx, m, vals, finite, L, cx, cy) {
    const keys = [m.settings.x.key, m.settings.y.key];
    const gx = keys[0] === "foils.1.x", gy = keys[1] === "foils.1.x";
    const px = keys[0] === "foils.1.phase", py = keys[1] === "foils.1.phase";
    if (!((gx && py) || (gy && px)) || finite.length === 0) { this.wakeSlope = null; return; }
    const c0 = m.cells[0].case;
    const slope = (360 * c0.frequency * c0.foils[0].chord) / c0.flow.speed; // deg per chord
    this.wakeSlope = slope;
    const best = m.cells[vals.indexOf(Math.max(...finite))];
    const gBest = gx ? best.x : best.y, pBest = gx ? best.y : best.x;
    const gs = gx ? m.xs : m.ys, ps = gx ? m.ys : m.xs;
    // Continuous mapping from value to canvas along each axis (through the cell centres).
    const toCanvas = (vs, idxToC, v) => {
      if (vs.length === 1) return idxToC(0);
      return idxToC(((v - vs[0]) / (vs[vs.length - 1] - vs[0])) * (vs.length - 1));
    };
    const gC = (g) => toCanvas(gs, gx ? cx : cy, g);
    const pC = (p) => toCanvas(ps, gx ? cy : cx, p);
    const g0 = gs[0] - 0.5 * (gs[1] - gs[0] || 0), g1 = gs[gs.length - 1] + 0.5 * (gs[1] - gs[0] || 0);
    const pLo = Math.min(ps[0], ps[ps.length - 1]), pHi = Math.max(ps[0], ps[ps.length - 1]);
    ctx.save();
    ctx.beginPath();
    ctx.rect(L.left, L.top, L.right - L.left, L.bottom - L.top);
    ctx.clip();
    ctx.strokeStyle = "#ffffff";
    ctx.lineWidth = 3;
    const path = () => {
      ctx.beginPath();
      // Phases repeat every 360 deg: draw every copy of the line that crosses the map.
      for (let k = -6; k <= 6; k++) {
        const pa = pBest + slope * (g0 - gBest) + 360 * k, pb = pBest + slope * (g1 - gBest) + 360 * k;
        if (Math.max(pa, pb) < pLo - 360 || Math.min(pa, pb) > pHi + 360) continue;
        const [ax, ay] = gx ? [gC(g0), pC(pa)] : [pC(pa), gC(g0)];
        const [bx, by] = gx ? [gC(g1), pC(pb)] : [pC(pb), gC(g1)];
        ctx.moveTo(ax, ay);
        ctx.lineTo(bx, by);
      }
    };
    path(); ctx.setLineDash([]); ctx.stroke();
    ctx.strokeStyle = "#1d2430"; ctx.lineWidth = 1.5; ctx.setLineDash([6, 4]);
    path(); ctx.stroke();
    ctx.restore();
  }

  axes(ctx, m, L, cw, ch) {
    const s = m.settings;
    const spec = (k) => MAP_KEYS.find((x) => x.key === k);
    ctx.save();
    ctx.strokeStyle = "#1d2430";
    ctx.strokeRect(L.left, L.top, L.right - L.left, L.bottom - L.top);
    ctx.fillStyle = "#1d2430";
    ctx.font = "11px system-ui, sans-serif";
    const ticks = (vs, n) => {
      const every = Math.max(1, Math.ceil(vs.length / n));
      return vs.map((v, i) => [v, i]).filter(([, i]) => i % every === 0);
    };
    ctx.textAlign = "center";
    ctx.textBaseline = "top";
    for (const [v, i] of ticks(m.xs, Math.max(2, Math.floor((L.right - L.left) / 50)))) {
      ctx.fillText(fmt(v, 4), L.left + (i + 0.5) * cw, L.bottom + 4);
    }
    ctx.textAlign = "right";
    ctx.textBaseline = "middle";
    for (const [v, j] of ticks(m.ys, Math.max(2, Math.floor((L.bottom - L.top) / 20)))) {
      ctx.fillText(fmt(v, 4), L.left - 4, L.bottom - (j + 0.5) * ch);
    }
    ctx.font = "12px system-ui, sans-serif";
    ctx.textAlign = "center";
    ctx.textBaseline = "bottom";
    const xs = spec(s.x.key), ys = spec(s.y.key);
    ctx.fillText(`${xs.label} (${xs.unit === "c" ? "fore chords" : xs.unit})`, (L.left + L.right) / 2, L.h - 4);
    ctx.translate(14, (L.top + L.bottom) / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.textBaseline = "middle";
    ctx.fillText(`${ys.label} (${ys.unit === "c" ? "fore chords" : ys.unit})`, 0, 0);
    ctx.restore();
  }

  colourBar(ctx, q, lo, hi, L) {
    const x0 = L.right + 14, w = 14, top = L.top, bot = L.bottom;
    for (let p = 0; p < bot - top; p++) {
      const t = 1 - p / (bot - top);
      const [r, g, b] = q.ratio ? diverging(t) : sequential(t);
      ctx.fillStyle = `rgb(${r},${g},${b})`;
      ctx.fillRect(x0, top + p, w, 1.5);
    }
    ctx.strokeStyle = "#1d2430";
    ctx.strokeRect(x0, top, w, bot - top);
    ctx.fillStyle = "#1d2430";
    ctx.font = "11px system-ui, sans-serif";
    ctx.textAlign = "left";
    ctx.textBaseline = "middle";
    if (Number.isFinite(lo) && Number.isFinite(hi) && hi > lo) {
      const step = niceStep((hi - lo) / 5);
      for (let v = Math.ceil(lo / step) * step; v <= hi + 1e-9 * step; v += step) {
        const y = bot - ((v - lo) / (hi - lo)) * (bot - top);
        ctx.fillRect(x0 + w, y, 3, 1);
        ctx.fillText(fmt(Math.abs(v) < step * 1e-6 ? 0 : v, 3), x0 + w + 5, y);
      }
    }
    ctx.save();
    ctx.translate(L.w - 8, (top + bot) / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.textAlign = "center";
    ctx.font = "12px system-ui, sans-serif";
    ctx.fillText(`${q.label} (${q.unit})`, 0, 0);
    ctx.restore();
  }

  // ------------------------------------------------------------------------------------------
  // Hover, click, exports.

  cellAt(e) {
    if (!this.map) return null;
    const r = this.canvas.getBoundingClientRect();
    const L = this.layout();
    const x = e.clientX - r.left, y = e.clientY - r.top;
    if (x < L.left || x >= L.right || y < L.top || y >= L.bottom) return null;
    const i = Math.floor(((x - L.left) / (L.right - L.left)) * this.map.xs.length);
    const j = Math.floor(((L.bottom - y) / (L.bottom - L.top)) * this.map.ys.length);
    return this.map.cells[j * this.map.xs.length + i] ?? null;
  }

  hover(e) {
    const c = this.cellAt(e);
    if (c) this.show(c);
  }

  /** Keyboard: arrows move through the cells (the readout follows), Enter opens the cell. */
  key(e) {
    if (!this.map) return;
    const m = this.map;
    const cur = this.cursor ?? { i: 0, j: 0 };
    const moves = { ArrowLeft: [-1, 0], ArrowRight: [1, 0], ArrowUp: [0, 1], ArrowDown: [0, -1] };
    if (moves[e.key]) {
      e.preventDefault();
      const i = Math.min(m.xs.length - 1, Math.max(0, cur.i + moves[e.key][0]));
      const j = Math.min(m.ys.length - 1, Math.max(0, cur.j + moves[e.key][1]));
      this.cursor = { i, j };
      this.show(m.cells[j * m.xs.length + i]);
    } else if (e.key === "Enter" || e.key === " ") {
      e.preventDefault();
      this.open(m.cells[cur.j * m.xs.length + cur.i]);
    }
  }

  /** Shows a cell's values in the readout. */
  show(c) {
    const m = this.map;
    this.cursor = { i: c.i, j: c.j };
    const xs = MAP_KEYS.find((k) => k.key === m.settings.x.key), ys = MAP_KEYS.find((k) => k.key === m.settings.y.key);
    const q = this.quantitySpec();
    const part = (text, attrs = {}) => el("span", attrs, text);
    const kids = [
      part(`${xs.short} ${fmt(c.x)} ${xs.unit}`, { dataset: { x: String(c.x) } }),
      ", ",
      part(`${ys.short} ${fmt(c.y)} ${ys.unit}`, { dataset: { y: String(c.y) } }),
    ];
    if (c.case.foils.length >= 2) {
      // The design asks for the leading-edge-to-leading-edge distance beside the gap.
      const f0 = c.case.foils[0], f1 = c.case.foils[1];
      kids.push(` (LE to LE ${fmt((f1.x - f0.x) / f0.chord)} c)`);
    }
    kids.push(": ");
    if (!c.finished) kids.push("not computed yet");
    else if (c.error) kids.push(`cannot run: ${c.error}`);
    else {
      const v = q.get(c);
      kids.push(part(`${q.label} ${fmt(v)} ${q.unit}`, { dataset: { value: String(v), mapQuantity: q.id } }));
      const s = c.summary;
      const extra = [
        ["foils.1.thrust", "hind thrust", s.foils[1].thrust, "N"],
        ["total.thrust", "pair thrust", s.total.thrust, "N"],
        ["total.efficiency", "pair η", s.total.efficiency, ""],
        ["foils.1.thrust_ratio", "T₁/T alone", c.thrustRatio, ""],
        ["foils.1.efficiency_ratio", "η₁/η alone", c.efficiencyRatio, ""],
      ];
      for (const [key, label, val, unit] of extra) {
        kids.push(" · ", part(`${label} ${fmt(val)}${unit ? ` ${unit}` : ""}`, { dataset: { mapQuantity: key, value: String(val) } }));
      }
    }
    this.readout.replaceChildren(...kids);
    this.readout.dataset.cell = String(c.j * m.xs.length + c.i);
  }

  click(e) {
    const c = this.cellAt(e);
    if (c) this.open(c);
  }

  /** Opens the cell's configuration in the live view. */
  open(c) {
    const xs = MAP_KEYS.find((k) => k.key === this.map.settings.x.key), ys = MAP_KEYS.find((k) => k.key === this.map.settings.y.key);
    this.loadCase(structuredClone(c.case), `the map cell ${xs.short} ${fmt(c.x)} ${xs.unit}, ${ys.short} ${fmt(c.y)} ${ys.unit}`);
  }

  exportCsv() {
    const m = this.map;
    if (!m) return;
    const cols = [
      ["foils.0.thrust", (s) => s.foils[0].thrust], ["foils.1.thrust", (s) => s.foils[1].thrust],
      ["foils.0.thrust_coefficient", (s) => s.foils[0].thrust_coefficient], ["foils.1.thrust_coefficient", (s) => s.foils[1].thrust_coefficient],
      ["foils.0.efficiency", (s) => s.foils[0].efficiency], ["foils.1.efficiency", (s) => s.foils[1].efficiency],
      ["total.thrust", (s) => s.total.thrust], ["total.thrust_coefficient", (s) => s.total.thrust_coefficient],
      ["total.power", (s) => s.total.power], ["total.efficiency", (s) => s.total.efficiency],
    ];
    const q = (t) => `"${String(t).replace(/"/g, "'")}"`;
    const lines = [
      "# finwake map: each row is one configuration, run as `finwake simulate` runs it; 2D inviscid screening estimates",
      `# units: ${m.settings.x.key} and ${m.settings.y.key} as in the page (gap and offset in fore chords, angles deg); thrust N, power W; ratios to the hind foil alone with the same motion`,
      ["index", m.settings.x.key, m.settings.y.key, ...cols.map((c) => c[0]), "foils.1.thrust_ratio", "foils.1.efficiency_ratio", "error"].join(","),
    ];
    m.cells.forEach((c, k) => {
      if (!c.finished) return;
      const s = c.summary;
      const v = (x) => (x === null || x === undefined ? "" : String(x));
      lines.push([k, c.x, c.y, ...cols.map(([, g]) => (s ? v(g(s)) : "")), v(c.thrustRatio), v(c.efficiencyRatio), c.error ? q(c.error) : ""].join(","));
    });
    download(new Blob([`${lines.join("\n")}\n`], { type: "text/csv" }), "finwake-map.csv");
  }

  exportPng() {
    this.canvas.toBlob((blob) => { if (blob) download(blob, "finwake-map.png"); }, "image/png");
  }
}
