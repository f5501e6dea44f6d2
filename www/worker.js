// The solver worker: runs one simulation (role "main") or the single-foil reference run
// (role "reference") off the page's thread. Messages are documented in solver-client.js.
import { loadSolver, derived, SolverRun, rigCheckReport, solverMemoryBytes } from "./sim.js";

let run = null; // the active SolverRun
let token = 0; // the active run's token
let stepsPerCycle = 0; // 0 for a start from rest
let lastConsoleError = "";
let referenceCycles = Infinity; // whole cycles the reference run may complete for now
let referenceWaiting = null; // the reference's next slice while it waits for a larger allowance

// A Rust panic is reported through console.error (console_error_panic_hook); keep its text so
// the page can show it.
const consoleError = console.error.bind(console);
console.error = (...args) => {
  lastConsoleError = args.map(String).join(" ");
  consoleError(...args);
};

function post(msg, transfer = []) {
  self.postMessage(msg, transfer);
}

function caseError(e) {
  return { message: String(e?.message ?? e), path: e?.path ?? "", value: e?.value ?? "", allowed: e?.allowed ?? "", fix: e?.fix ?? "" };
}

function isCaseError(e) {
  return e && e.name === "CaseError";
}

function fatal(e, context) {
  const detail = lastConsoleError && !String(e?.message).includes(lastConsoleError) ? `\n${lastConsoleError}` : "";
  post({ type: "fatal", message: `${context}: ${e?.message ?? e}${detail}` });
}

function spc(caseObj) {
  return caseObj.frequency > 0 ? caseObj.numerics?.steps_per_cycle ?? 100 : 0;
}

/** Creates a run; on a bad case keeps the old run and reports the error. */
function start(msg) {
  let d = null;
  try {
    d = derived(msg.caseJson);
  } catch (e) {
    if (!isCaseError(e)) throw e;
  }
  let next;
  try {
    next = new SolverRun(msg.caseJson);
  } catch (e) {
    if (!isCaseError(e)) throw e;
    post({ type: "case-error", token: msg.token, activeToken: token, error: caseError(e), derived: d });
    return;
  }
  if (run) run.free();
  run = next;
  token = msg.token;
  stepsPerCycle = spc(JSON.parse(msg.caseJson));
  const outlines = run.outlines();
  const particles = run.particles();
  post(
    {
      type: "started", token, foils: run.foils, totalSteps: run.totalSteps, timeStep: run.timeStep,
      stepsPerCycle, derived: d, outlines, particles, time: run.time, stride: run.stride,
    },
    [particles.buffer, ...outlines.map((o) => o.buffer)],
  );
}

/** Steps the active run: up to msg.steps steps, at least one, and no further step once the last
 * one's duration would take the work past msg.budgetMs. */
function advance(msg) {
  if (!run || msg.token !== token) {
    post({ type: "frame", token, stale: true });
    return;
  }
  const before = run.stepsTaken;
  const t0 = performance.now();
  const chunks = [];
  let taken = 0;
  let length = 0;
  let last = t0;
  while (taken < msg.steps && !run.finished) {
    const rec = run.advance(1);
    if (rec.length === 0) break;
    chunks.push(rec);
    length += rec.length;
    taken += 1;
    const now = performance.now();
    if (now - t0 + (now - last) > msg.budgetMs) break;
    last = now;
  }
  const stepMs = performance.now() - t0;
  const records = new Float64Array(length);
  let at = 0;
  for (const c of chunks) { records.set(c, at); at += c.length; }
  const after = run.stepsTaken;
  const crossed = stepsPerCycle > 0 && Math.floor(before / stepsPerCycle) !== Math.floor(after / stepsPerCycle);
  const summary = crossed || run.finished || msg.wantSummary ? run.summary() : null;
  const particles = run.particles();
  const outlines = run.outlines();
  post(
    {
      type: "frame", token, steps: taken, stepMs, stepsTaken: after, time: run.time,
      finished: run.finished, records, particles, outlines, summary, memoryBytes: solverMemoryBytes(),
    },
    [records.buffer, particles.buffer, ...outlines.map((o) => o.buffer)],
  );
}

/** The reference run: whole cycles at a time, a summary after each, yielding between cycles so
 * a newer request can cancel it; with msg.cycles it stops after that many whole cycles until a
 * "reference-allow" message raises the allowance. */
function reference(msg) {
  let ref;
  try {
    ref = new SolverRun(msg.caseJson);
  } catch (e) {
    if (!isCaseError(e)) throw e;
    post({ type: "reference-error", token: msg.token, error: caseError(e) });
    return;
  }
  if (run) run.free();
  run = ref;
  token = msg.token;
  const perCycle = spc(JSON.parse(msg.caseJson));
  const perSlice = perCycle || 50;
  referenceCycles = msg.cycles ?? Infinity;
  referenceWaiting = null;
  const slice = () => {
    if (run !== ref || token !== msg.token) return;
    if (perCycle > 0 && Math.floor(ref.stepsTaken / perCycle) >= referenceCycles) {
      referenceWaiting = slice;
      return;
    }
    try {
      ref.advance(perSlice);
      if (perCycle > 0 || ref.finished) {
        const cycles = perCycle > 0 ? Math.floor(ref.stepsTaken / perCycle) : 0;
        post({ type: "reference-cycle", token: msg.token, cycles, stepsTaken: ref.stepsTaken, finished: ref.finished, summary: ref.summary() });
      }
      if (!ref.finished) setTimeout(slice, 0);
    } catch (e) {
      fatal(e, "The single-foil reference run failed");
    }
  };
  setTimeout(slice, 0);
}

self.onmessage = async (ev) => {
  const msg = ev.data;
  try {
    // Every request waits for the module (loaded once); requests keep their order.
    const facts = await loadSolver();
    switch (msg.type) {
      case "init":
        post({ type: "ready", ...facts });
        break;
      case "start": start(msg); break;
      case "advance": advance(msg); break;
      case "reference": reference(msg); break;
      case "reference-allow":
        if (msg.token === token) {
          referenceCycles = msg.cycles;
          const next = referenceWaiting;
          referenceWaiting = null;
          if (next) setTimeout(next, 0);
        }
        break;
      case "derived": {
        try {
          post({ type: "derived", id: msg.id, derived: derived(msg.caseJson) });
        } catch (e) {
          if (!isCaseError(e)) throw e;
          post({ type: "derived", id: msg.id, derived: null, error: caseError(e) });
        }
        break;
      }
      case "rig-check": {
        try {
          post({ type: "rig-check", id: msg.id, report: rigCheckReport(msg.caseJson) });
        } catch (e) {
          if (!isCaseError(e)) throw e;
          post({ type: "rig-check", id: msg.id, report: null, error: caseError(e) });
        }
        break;
      }
      default:
        post({ type: "fatal", message: `The solver worker got an unknown request ${JSON.stringify(msg.type)}` });
    }
  } catch (e) {
    fatal(e, msg.type === "init" ? "The solver (WebAssembly) could not be loaded" : `The solver failed (${msg.type})`);
  }
};
