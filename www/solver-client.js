// The page's side of a solver worker (worker.js).
//
// Requests (page -> worker):
//   { type: "init" }                               -> { type: "ready", loadFields, loadStride, limits }
//   { type: "start", token, caseJson }             -> { type: "started", token, foils, totalSteps,
//        timeStep, stepsPerCycle, derived, outlines, particles, time }
//      or, for a bad case (the old run goes on)    -> { type: "case-error", token, activeToken, error, derived }
//   { type: "advance", token, steps, budgetMs }    -> { type: "frame", token, steps, stepMs, stepsTaken,
//        time, finished, records, particles, outlines, summary|null }   (or { stale: true })
//   { type: "reference", token, caseJson, cycles } -> { type: "reference-cycle", token, cycles,
//        stepsTaken, finished, summary } after every whole cycle, up to `cycles` of them
//   { type: "reference-allow", token, cycles }     -> (none) lets the reference run on to `cycles`
//   { type: "derived", id, caseJson }              -> { type: "derived", id, derived|null, error? }
// Any failure of the wasm module or the worker  -> { type: "fatal", message }, or an error event.

const START_TIMEOUT_MS = 20000;

export class SolverClient {
  /**
   * @param {string} label  what this worker does, for messages ("solver", "single-foil reference")
   * @param {(msg: object) => void} onMessage
   * @param {(text: string) => void} onFault  called once with a readable message
   */
  constructor(label, onMessage, onFault) {
    this.label = label;
    this.onMessage = onMessage;
    this.onFault = onFault;
    this.faulted = false;
    this.ready = false;
    try {
      this.worker = new Worker(new URL("./worker.js", import.meta.url), { type: "module", name: label });
    } catch (e) {
      this.fault(`The ${label} worker could not be created: ${e.message}. This page needs a browser with module Web Workers and WebAssembly.`);
      return;
    }
    this.worker.addEventListener("message", (ev) => {
      const msg = ev.data;
      if (msg.type === "ready") {
        this.ready = true;
        clearTimeout(this.timer);
      }
      if (msg.type === "fatal") {
        this.fault(msg.message);
        return;
      }
      this.onMessage(msg);
    });
    this.worker.addEventListener("error", (ev) => {
      ev.preventDefault();
      const where = ev.filename ? ` (${ev.filename}:${ev.lineno})` : "";
      this.fault(`The ${label} worker stopped with an error: ${ev.message || "its scripts did not load"}${where}.`);
    });
    this.worker.addEventListener("messageerror", () => {
      this.fault(`The ${label} worker sent a message the page could not read.`);
    });
    this.timer = setTimeout(() => {
      if (!this.ready) this.fault(`The ${label} did not start within ${START_TIMEOUT_MS / 1000} s (the WebAssembly module may have failed to load).`);
    }, START_TIMEOUT_MS);
    this.post({ type: "init" });
  }

  post(msg) {
    if (!this.faulted && this.worker) this.worker.postMessage(msg);
  }

  fault(text) {
    if (this.faulted) return;
    this.faulted = true;
    clearTimeout(this.timer);
    if (this.worker) this.worker.terminate();
    this.onFault(text);
  }
}
