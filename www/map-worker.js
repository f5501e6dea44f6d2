// One worker of the map's pool (ui/map.js starts up to one per core). It runs whole cases, one
// at a time, exactly as `finwake simulate` does: `new WasmSim(caseJson)`, `advance` until the run
// is finished, then `summary()`.
//
// Requests (page -> worker):
//   { type: "init" }                  -> { type: "ready" }
//   { type: "run", id, caseJson }     -> { type: "cell", id, summary, ms }
//      or, for a case the crate rejects -> { type: "cell-error", id, error: { message, path, value, allowed } }
// A failure of the wasm module or of the worker -> { type: "fatal", message }, or an error event.
import { loadSolver, SolverRun } from "./sim.js";

/** Steps per advance() call; the result does not depend on it. */
const CHUNK = 200;

function post(msg) {
  self.postMessage(msg);
}

function run(msg) {
  let sim;
  const t0 = performance.now();
  try {
    sim = new SolverRun(msg.caseJson);
  } catch (e) {
    if (e?.name !== "CaseError") throw e;
    post({ type: "cell-error", id: msg.id, error: { message: String(e.message), path: e.path ?? "", value: e.value ?? "", allowed: e.allowed ?? "" } });
    return;
  }
  try {
    while (!sim.finished) sim.advance(CHUNK);
    post({ type: "cell", id: msg.id, summary: sim.summary(), ms: performance.now() - t0 });
  } finally {
    sim.free();
  }
}

self.onmessage = async (ev) => {
  const msg = ev.data;
  try {
    await loadSolver();
    if (msg.type === "init") post({ type: "ready" });
    else if (msg.type === "run") run(msg);
    else post({ type: "fatal", message: `The map worker got an unknown request ${JSON.stringify(msg.type)}` });
  } catch (e) {
    post({ type: "fatal", message: msg.type === "init" ? `The map worker could not load the solver (WebAssembly): ${e?.message ?? e}` : `The map worker failed on a cell: ${e?.message ?? e}` });
  }
};
