// The only module that imports the generated wasm package (./pkg, built by `cargo xtask site`).
// It runs inside the solver worker (worker.js), and on the page's main thread for the link codec,
// case-file checks and export header (pageCodec). Buffer layouts are documented in crate/src/wasm.rs:
//   particles(): Float64Array [x_0..x_n-1, y_0..y_n-1, circulation_0..] (m, m, m^2/s CCW positive)
//   outline(i):  Float64Array [x0, y0, x1, y1, ...] (m), trailing edge first, closed polygon
//   advance(n):  Float64Array per step [time (s), foil 0 loads..., foil 1 loads...]
//   loads():     Float64Array, loadStride() numbers per foil in the order of loadFields()
import init, {
  WasmSim, loadFields, loadStride, caseLimits, derivedNumbers, checkCase,
  caseToLink, linkToCase, normaliseCase, historyHeader, finwakeVersion, rigCheck,
} from "./pkg/finwake.js";

let ready = null;
let wasmMemory = null; // the module's linear memory, once loaded

/** Loads and instantiates the wasm module once; resolves to the module's static facts. */
export function loadSolver() {
  if (!ready) {
    ready = init().then((exports) => {
      wasmMemory = exports?.memory ?? null;
      return {
      loadFields: loadFields(),
      loadStride: loadStride(),
      limits: caseLimits(),
      };
    });
  }
  return ready;
}

/** Bytes of WebAssembly memory the solver holds in this thread (0 before it loads). */
export function solverMemoryBytes() {
  return wasmMemory ? wasmMemory.buffer.byteLength : 0;
}

/** Derived numbers of a case (array per foil); throws the crate's CaseError for a bad case. */
export function derived(caseJson) {
  return derivedNumbers(caseJson);
}

/** The rig check of a case (the JSON of `finwake check --json`); throws the crate's CaseError. */
export function rigCheckReport(caseJson) {
  return JSON.parse(rigCheck(caseJson));
}

/** Validates a case (including the geometry checks); throws the crate's CaseError. */
export function check(caseJson) {
  checkCase(caseJson);
}

/** One simulation run; call free() when done. */
export class SolverRun {
  constructor(caseJson) {
    this.sim = new WasmSim(caseJson);
    this.foils = this.sim.foilCount();
    this.stride = loadStride();
    this.timeStep = this.sim.timeStep();
    this.totalSteps = this.sim.totalSteps();
  }
  /** Takes up to n steps; returns the per-step records (see the header). */
  advance(n) { return this.sim.advance(n); }
  get stepsTaken() { return this.sim.stepsTaken(); }
  get finished() { return this.sim.isFinished(); }
  get time() { return this.sim.time(); }
  particles() { return this.sim.particles(); }
  outlines() {
    const out = [];
    for (let i = 0; i < this.foils; i++) out.push(this.sim.outline(i));
    return out;
  }
  summary() { return this.sim.summary(); }
  free() { this.sim.free(); this.sim = null; }
}

/** The crate's link codec, case-file check and export header (crate/src/link.rs, export.rs) for
 * the page's main thread (ui/share.js, ui/files.js, ui/exports.js); loads the module there. */
export function pageCodec() {
  return loadSolver().then(() => ({
    caseToLink, linkToCase, normaliseCase, historyHeader, finwakeVersion, loadFields: loadFields(),
  }));
}
