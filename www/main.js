// Entry of the live view: builds the state, the controls, the views and the two solver workers
// (the run on screen, and the single-foil reference run in the background), then starts the loop.
// Every failure ends in a readable message in the page.
import { PageState } from "./state.js";
import { SolverClient } from "./solver-client.js";
import { Loop, StepPacer } from "./loop.js";
import { WakeView } from "./render/wake.js";
import { TimePlot } from "./plot/timeseries.js";
import { Controls } from "./ui/controls.js";
import { Readouts } from "./ui/readouts.js";
import { Notices } from "./ui/notices.js";
import { CaseFiles } from "./ui/files.js";
import { ShareLink } from "./ui/share.js";
import { Exports } from "./ui/exports.js";
import { MapView } from "./ui/map.js";
import { RigCheckPanel } from "./ui/rigcheck.js";

const $ = (id) => document.getElementById(id);
const PLOT_COLOURS = ["#0f6f75", "#b3404a", "#8a7a1f", "#5b4fb0", "#3f8f3f", "#b36b1f", "#9c3f8a", "#4f7fa6"];
const PLOT_CYCLES = 3;
const DEFAULT_PRESET = "tandem-two-chords.json";

let faulted = false;

/** Shows a failure in the page (banner and over the wake view) and stops the run. */
function fault(text) {
  if (faulted) return;
  faulted = true;
  const box = $("fault");
  box.hidden = false;
  box.textContent = `The live view stopped. ${text}\nReload the page to try again.`;
  const over = $("wake-message");
  over.hidden = false;
  over.textContent = text;
  document.body.dataset.runState = "fault";
  $("run-state").textContent = "stopped by an error";
}

window.addEventListener("error", (e) => fault(`A script error: ${e.message}`));
window.addEventListener("unhandledrejection", (e) => fault(`A script error: ${e.reason?.message ?? e.reason}`));

const state = new PageState();
const controls = new Controls($("controls"), state, () => restart());
const readouts = new Readouts($("readouts"), $("averaged"), $("relative-note"));
const wake = new WakeView($("wake"));
const plots = {
  thrust: new TimePlot($("plot-thrust"), { title: "Thrust coefficient", unit: "C_T" }),
  lift: new TimePlot($("plot-lift"), { title: "Lift coefficient", unit: "C_L" }),
  power: new TimePlot($("plot-power"), { title: "Input power", unit: "P (W)" }),
};
// Offsets into one foil's loads record (see loadFields() in crate/src/wasm.rs).
let field = { lift_coefficient: 3, thrust_coefficient: 4, power: 10 };
let stride = 11;

const pacer = new StepPacer();
let presets = [];
let token = 0; // newest start request
let activeToken = -1; // the run the worker is stepping
const pending = new Map(); // token -> candidate case
let run = null; // facts of the active run
let inFlight = 0; // batches asked for and not yet answered
let stepOnce = false;
let refToken = 0;
let refSummaries = [];
// The single-foil case of the reference run (JSON) and the error it gave, if any. It leaves out
// the hind foil's position and phase, so moving the spacing, offset or phase sliders keeps the
// reference run (going on, or done) and its summaries instead of starting it again.
let refCaseJson = null;
let refError = null;
// Whole cycles the single-foil reference may run ahead of the live run: it waits there instead
// of taking a core from the live run (and the page's drawing) until it is done.
const REFERENCE_LEAD = 2;
let refAllowed = 0; // the last allowance sent to the reference worker (cycles)
let lastSummary = null;
// The clock, step, cycle and particle readouts change with every batch (up to 60 times a second
// at the fastest speed); rewriting their text that often cost the page's thread more than
// drawing the wake's particles (measured in the page, DEVELOPERS.md), so they are written at most
// every CLOCK_MS while the run goes on (see flushClock).
const CLOCK_MS = 100;
let clockDue = null; // the clock not yet shown: { steps, time (s), particles }
let clockShownAt = -Infinity; // ms, performance.now() of the last write
const perf = { steps: 0, stepMs: 0, draws: 0, frames: 0, since: performance.now() };

const main = new SolverClient("solver", onSolver, fault);
const reference = new SolverClient("single-foil reference", onReference, fault);

// Links, case files and exports (ui/share.js, ui/files.js, ui/exports.js).
const notices = new Notices($("notices"));
const files = new CaseFiles({
  state, notices, saveButton: $("case-export"), fileInput: $("case-import"),
  afterLoad: () => { wake.userMoved = false; rebuildControls(); restart(); },
});
const share = new ShareLink({ state, files, notices, root: $("share-export") });
new Exports({ client: main, state, root: $("share-export"), wakeCanvas: $("wake"), plotCanvases: ["plot-thrust", "plot-lift", "plot-power"].map($) });
// Spacing-phase maps (ui/map.js): start from the live view's case; a clicked cell opens in it.
const mapView = new MapView({ root: $("map-view"), notices, getCase: () => (state.values ? state.candidate() : null), loadCase: (c, label) => files.replaceCase(c, label) });
// The rig check runs the whole case once, in a worker of its own so the live view keeps going.
const rigPending = new Map();
let rigId = 0;
const rigWorker = new SolverClient("rig check", (msg) => {
  if (msg.type !== "rig-check") return;
  const p = rigPending.get(msg.id);
  if (!p) return;
  rigPending.delete(msg.id);
  if (msg.report) p.resolve(msg.report);
  else p.reject(new Error(msg.error?.message ?? "the case cannot run"));
}, (text) => {
  for (const p of rigPending.values()) p.reject(new Error(text));
  rigPending.clear();
});
new RigCheckPanel($("rig-check"), () => state.candidate(), (caseJson) => new Promise((resolve, reject) => {
  rigId += 1;
  rigPending.set(rigId, { resolve, reject });
  rigWorker.post({ type: "rig-check", id: rigId, caseJson });
}));
share.extraFragment = () => mapView.fragment();

if ("serviceWorker" in navigator) {
  // Offline use once loaded; the page works the same without it.
  navigator.serviceWorker.register("sw.js").catch(() => {});
}

loadPresets().catch((e) => fault(`The example cases could not be loaded: ${e.message}`));

async function loadPresets() {
  const index = await fetchJson("cases/index.json");
  presets = await Promise.all(index.map(async (p) => ({ ...p, case: await fetchJson(`cases/${p.file}`) })));
  const sel = $("preset");
  sel.replaceChildren(...presets.map((p, i) => new Option(p.title, String(i))));
  const d = Math.max(0, presets.findIndex((p) => p.file === DEFAULT_PRESET));
  sel.value = String(d);
  const linked = await share.linkedCase();
  if (linked) sel.append(new Option("(the case from the link)", "link", true, true));
  state.load(linked ?? presets[d].case);
  files.markClean();
  maybeStart();
}

async function fetchJson(url) {
  const r = await fetch(url);
  if (!r.ok) throw new Error(`${url}: HTTP ${r.status}`);
  return r.json();
}

function maybeStart() {
  if (!main.ready || !state.values || faulted) return;
  if (activeToken < 0 && token === 0) {
    rebuildControls();
    restart();
  }
}

function rebuildControls() {
  controls.build();
  $("foil-count").textContent = state.values.foils.length >= 2 ? "Remove the hind foil" : "Add a hind foil";
}

/** A parameter changed (or reset): start a new run of the user's case at once. */
function restart() {
  if (faulted || !main.ready) return;
  token += 1;
  const c = state.candidate();
  pending.set(token, c);
  main.post({ type: "start", token, caseJson: JSON.stringify(c) });
}

function onSolver(msg) {
  switch (msg.type) {
    case "ready":
      controls.setLimits(msg.limits);
      stride = msg.loadStride;
      field = indexFields(msg.loadFields);
      maybeStart();
      break;
    case "started": started(msg); break;
    case "case-error":
      pending.delete(msg.token);
      controls.showCaseError(msg.error);
      controls.showDerived(msg.derived);
      activeToken = msg.activeToken;
      if (!run) {
        // Nothing runs yet (e.g. a link whose foils overlap): say why over the empty wake view.
        const over = $("wake-message");
        over.hidden = false;
        over.textContent = `This case cannot run: ${msg.error?.message ?? "see the marked control"}. Change the marked value to start.`;
        $("run-state").textContent = "waiting for a case that can run";
      }
      break;
    case "frame": frame(msg); break;
    default: break;
  }
}

function indexFields(names) {
  const at = (name) => names.findIndex((n) => n === name || n.startsWith(`${name} (`));
  return { lift_coefficient: at("lift_coefficient"), thrust_coefficient: at("thrust_coefficient"), power: at("power") };
}

function started(msg) {
  const c = pending.get(msg.token);
  for (const k of pending.keys()) if (k <= msg.token) pending.delete(k);
  activeToken = msg.token;
  state.accepted = c;
  const n = msg.foils;
  const f = c.frequency;
  run = { foils: n, totalSteps: msg.totalSteps, timeStep: msg.timeStep, stepsPerCycle: msg.stepsPerCycle, cycles: f > 0 ? c.numerics.cycles : 0, finished: false, frequency: f };
  pacer.reset();
  lastSummary = null;
  const windowSeconds = f > 0 ? PLOT_CYCLES / f : msg.totalSteps * msg.timeStep;
  const capacity = Math.min(20000, f > 0 ? PLOT_CYCLES * msg.stepsPerCycle + 8 : msg.totalSteps + 8);
  const series = Array.from({ length: n }, (_, i) => ({ label: `foil ${i}`, color: PLOT_COLOURS[i % PLOT_COLOURS.length] }));
  for (const p of Object.values(plots)) p.setSeries(series, capacity, windowSeconds);
  if (readouts.cells.size === 0 || readouts.foils !== n) { readouts.build(n); readouts.foils = n; } else readouts.clear();
  readouts.showRelative(null, null, 0);
  if (n >= 2) readouts.relativeNote.textContent = "Single-foil reference: computing in the background…";
  wake.setCase(c);
  wake.setScene(msg.outlines, msg.particles);
  controls.showCaseError(null);
  controls.showDerived(msg.derived);
  $("case-json").value = JSON.stringify(c, null, 2);
  if (n >= 2) {
    const single = JSON.stringify(PageState.singleFoilCase(c, 1));
    if (single !== refCaseJson) {
      refCaseJson = single;
      refError = null;
      refSummaries = [];
      refToken += 1;
      refAllowed = msg.stepsPerCycle > 0 ? REFERENCE_LEAD : Infinity;
      reference.post({ type: "reference", token: refToken, caseJson: single, cycles: refAllowed });
    } else if (refError) {
      readouts.relativeNote.textContent = refError;
    }
    // A kept reference waits where it is until the restarted live run comes within
    // REFERENCE_LEAD cycles of it (allowReference only ever raises the allowance).
    document.body.dataset.referenceRun = String(refToken);
  }
  updateClock(0, msg.time, 0, true);
  setRunState();
  if (!faulted) $("wake-message").hidden = true;
  document.body.dataset.ready = "true";
}

function frame(msg) {
  inFlight = Math.max(0, inFlight - 1);
  if (msg.stale || msg.token !== activeToken || !run) return;
  pacer.observe(msg.steps, msg.stepMs);
  perf.steps += msg.steps;
  perf.stepMs += msg.stepMs;
  const per = 1 + run.foils * stride;
  const rec = msg.records;
  for (let s = 0; s + per <= rec.length; s += per) {
    const t = rec[s];
    for (let i = 0; i < run.foils; i++) {
      const b = s + 1 + i * stride;
      plots.thrust.push(i, t, rec[b + field.thrust_coefficient]);
      plots.lift.push(i, t, rec[b + field.lift_coefficient]);
      plots.power.push(i, t, rec[b + field.power]);
    }
  }
  wake.setScene(msg.outlines, msg.particles);
  updateClock(msg.stepsTaken, msg.time, Math.floor(msg.particles.length / 3), msg.finished);
  // The solver worker's WebAssembly memory (bytes), for the benchmark's memory check.
  if (msg.memoryBytes) document.body.dataset.solverMemory = String(msg.memoryBytes);
  if (msg.summary) {
    lastSummary = { summary: msg.summary, stepsTaken: msg.stepsTaken };
    readouts.show(msg.summary, run.cycles);
    showRelative();
  }
  if (msg.finished) {
    run.finished = true;
    setRunState();
  }
  allowReference(msg.stepsTaken);
  // The next batch goes at once, not at the next animation frame (see askForSteps).
  askForSteps();
}

function onReference(msg) {
  if (msg.type === "reference-cycle" && msg.token === refToken) {
    // Whole cycles the single-foil reference has run (a test hook, see tests/browser/README.md).
    document.body.dataset.referenceCycles = String(msg.cycles);
    refSummaries[msg.cycles] = msg.summary;
    if (msg.finished) refSummaries.final = msg.summary;
    showRelative();
  } else if (msg.type === "reference-error" && msg.token === refToken) {
    refError = `The single-foil reference could not run: ${msg.error.message}`;
    readouts.relativeNote.textContent = refError;
  }
}

/** The hind foil against the single foil after the same number of whole cycles. */
function showRelative() {
  if (!run || run.foils < 2 || !lastSummary) return;
  const cycles = run.stepsPerCycle > 0 ? Math.floor(lastSummary.stepsTaken / run.stepsPerCycle) : 0;
  const single = run.stepsPerCycle > 0 ? refSummaries[cycles] : run.finished ? refSummaries.final : null;
  if (lastSummary.summary.cycles_averaged === 0 && run.stepsPerCycle > 0) return;
  readouts.showRelative(lastSummary.summary.foils[1], single ? single.foils[0] : null, cycles);
}

/** Notes the run's clock and particle count; shown now when `now` is set (a new run, or the
 * batch that finishes it), otherwise by flushClock. */
function updateClock(steps, time, particles = 0, now = false) {
  clockDue = { steps, time, particles };
  if (now) clockShownAt = -Infinity;
  flushClock(performance.now());
}

/** Writes the noted clock: at most every CLOCK_MS while the run goes on, at once when it is
 * paused or finished (so a readout never lags a stopped run). */
function flushClock(now) {
  if (!clockDue || !run) return;
  if (state.running && !run.finished && now - clockShownAt < CLOCK_MS) return;
  const { steps, time, particles } = clockDue;
  clockDue = null;
  clockShownAt = now;
  const setStat = (k, text, value) => {
    const e = document.querySelector(`[data-stat="${k}"]`);
    e.textContent = text;
    if (value !== undefined) e.dataset.value = String(value);
  };
  setStat("time", `t = ${time.toFixed(3)} s`, time);
  setStat("step", `step ${steps} of ${run.totalSteps}`, steps);
  if (run.stepsPerCycle > 0) setStat("cycle", `cycle ${(steps / run.stepsPerCycle).toFixed(2)} of ${run.cycles}`, steps / run.stepsPerCycle);
  else setStat("cycle", "start from rest", 0);
  setStat("particles", `${particles} particles`, particles);
}

function setRunState() {
  if (faulted) return;
  const s = run?.finished ? "finished" : state.running ? "running" : "paused";
  document.body.dataset.runState = s;
  $("run-toggle").textContent = state.running ? "Pause" : "Run";
  $("run-toggle").setAttribute("aria-pressed", state.running ? "false" : "true");
  $("run-state").textContent = s === "finished" ? `finished: all ${run.totalSteps} steps (Reset runs it again)` : s === "running" ? "running" : "paused";
}

/** Lets the single-foil reference run REFERENCE_LEAD cycles past the live run's `stepsTaken`,
 * and to its end once the live run has finished. */
function allowReference(stepsTaken) {
  if (run.foils < 2 || run.stepsPerCycle <= 0) return;
  const cycles = run.finished ? Infinity : Math.floor(stepsTaken / run.stepsPerCycle) + REFERENCE_LEAD;
  if (cycles > refAllowed) {
    refAllowed = cycles;
    reference.post({ type: "reference-allow", token: refToken, cycles });
  }
}

/** Whether a batch of steps may be asked for now: a run that can go on, no case change waiting,
 * and fewer than `limit` batches in flight. */
function canRequest(limit = 1) {
  return !faulted && run && !run.finished && inFlight < limit && pending.size === 0;
}

/** Asks the worker for what a running run is owed, on every animation frame and whenever a batch
 * comes back: at the fastest speed two batches are kept in flight, so that the worker starts the
 * next as soon as it has posted one while the page takes in and draws that one; at a set speed
 * the steps owed, one batch in flight (see loop.js). */
function askForSteps() {
  if (!state.running || stepOnce) return;
  if (state.speed === "max") {
    while (canRequest(2)) {
      const { steps, budgetMs } = pacer.fastest();
      request(steps, budgetMs);
    }
  } else if (canRequest()) {
    const { steps, budgetMs } = pacer.next(state.speed, run.timeStep);
    if (steps > 0) request(steps, budgetMs);
  }
}

function request(steps, budgetMs) {
  inFlight += 1;
  main.post({ type: "advance", token: activeToken, steps, budgetMs });
}

const loop = new Loop((dt, now) => {
  perf.frames += 1;
  const owing = state.running && !stepOnce && run && !run.finished && state.speed !== "max";
  pacer.frame(dt, owing ? state.speed : 0);
  if (stepOnce) {
    if (canRequest()) {
      stepOnce = false;
      request(1, 1000);
    }
  } else askForSteps();
  flushClock(now);
  let drew = false;
  if (wake.needsDraw) { wake.draw(); drew = true; }
  for (const p of Object.values(plots)) if (p.needsDraw) { p.draw(); drew = true; }
  if (drew) perf.draws += 1;
  const elapsed = now - perf.since;
  if (elapsed > 1000) {
    const sps = perf.stepMs > 0 ? (perf.steps * 1000) / perf.stepMs : null;
    const fps = (perf.draws * 1000) / elapsed;
    const e1 = document.querySelector('[data-stat="steps_per_second"]');
    const e2 = document.querySelector('[data-stat="frame_rate"]');
    if (sps !== null) { e1.textContent = `${sps.toFixed(0)} solver steps/s`; e1.dataset.value = String(sps); }
    // Steps per second of wall time (the rate above counts the worker's computing time only).
    e1.dataset.wall = String((perf.steps * 1000) / elapsed);
    // Nothing changed to draw (paused or finished): say so rather than "0 frames/s".
    e2.textContent = perf.draws === 0 && perf.steps === 0 ? "idle, nothing new to draw" : `${fps.toFixed(0)} frames/s`;
    e2.dataset.value = String(fps);
    e2.dataset.callbacks = String((perf.frames * 1000) / elapsed);
    Object.assign(perf, { steps: 0, stepMs: 0, draws: 0, frames: 0, since: now });
  }
});
loop.start();

// Run controls.
$("run-toggle").addEventListener("click", () => { state.running = !state.running; pacer.reset(); setRunState(); });
$("run-step").addEventListener("click", () => { state.running = false; stepOnce = true; setRunState(); });
$("run-reset").addEventListener("click", () => restart());
$("run-speed").addEventListener("change", (e) => {
  const v = e.target.value;
  state.speed = v === "max" ? "max" : Number(v);
  pacer.reset();
});
$("view-in").addEventListener("click", () => wake.zoomAt(1.25, wake.surface.widthCss / 2, wake.surface.heightCss / 2));
$("view-out").addEventListener("click", () => wake.zoomAt(0.8, wake.surface.widthCss / 2, wake.surface.heightCss / 2));
$("view-fit").addEventListener("click", () => { wake.userMoved = false; wake.fit(); });
$("preset").addEventListener("change", (e) => {
  const p = presets[Number(e.target.value)];
  if (!p) return;
  files.replaceCase(p.case, `the example “${p.title}”`);
});
$("foil-count").addEventListener("click", () => {
  if (state.values.foils.length >= 2) files.change("The hind foil was removed.", () => state.removeFoil()); else state.addFoil();
  rebuildControls();
  restart();
  $("foil-count").focus();
});
