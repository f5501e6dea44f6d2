// The animation loop: requestAnimationFrame drives everything on the page's thread. The solver
// runs in a worker; each frame asks it for as many fixed time steps as real time times the speed
// factor calls for (capped, so a slow machine falls behind instead of spiralling), with at most
// one request in flight (and, when a batch comes back while the run owes steps, the owed steps are
// asked for at once rather than at the next frame). At the fastest speed ("max") two batches are
// kept in flight (main.js), each about one display frame of work less 3 ms, so that the worker
// never waits for the page and a new state arrives for every frame: the view is redrawn at the
// display rate. (Until the drawing was made cheaper, batches of two frames and a redraw every
// other frame gave the solver more steps on two cores; measured in the page, see DEVELOPERS.md.)
// The physics time step comes from the case, never from the frame time.

export class Loop {
  /** @param {(dtSeconds: number, nowMs: number) => void} onFrame */
  constructor(onFrame) {
    this.onFrame = onFrame;
    this.last = 0;
    this.tick = this.tick.bind(this);
  }
  start() { requestAnimationFrame(this.tick); }
  tick(now) {
    const dt = this.last ? Math.min(0.1, (now - this.last) / 1000) : 0;
    this.last = now;
    this.onFrame(dt, now);
    requestAnimationFrame(this.tick);
  }
}

/** How many solver steps to ask for: real time times the speed, counted on every animation frame
 * (also while a batch is in flight), less the steps already asked for. */
export class StepPacer {
  constructor() {
    this.accumulated = 0; // s of simulated time owed
    this.msPerStep = 5; // running estimate from the worker's timings
    this.frameMs = 1000 / 60; // running estimate of the display's frame interval
  }
  reset() { this.accumulated = 0; }
  /** Notes a finished batch. */
  observe(steps, ms) {
    if (steps > 0) this.msPerStep = 0.8 * this.msPerStep + 0.2 * (ms / steps);
  }
  /**
   * The steps owed now.
   * @param {number|"max"} speed  simulated seconds per real second, or "max"
   * @param {number} timeStep  s, the case's time step
   * @returns {{steps: number, budgetMs: number}}
   */
  next(speed, timeStep) {
    if (speed === "max") return this.fastest();
    const cap = Math.max(1, Math.floor(40 / Math.max(0.05, this.msPerStep)));
    let steps = Math.floor(this.accumulated / timeStep + 1e-9);
    if (steps <= 0) return { steps: 0, budgetMs: 0 };
    if (steps > cap) {
      steps = cap;
      this.accumulated = 0; // behind real time: drop the debt rather than pile it up
    } else {
      this.accumulated -= steps * timeStep;
    }
    return { steps, budgetMs: 45 };
  }
  /**
   * Called on every animation frame.
   * @param {number} dtReal  s of real time since the last frame
   * @param {number} speed  simulated seconds per real second owed for it (0 when paused, finished
   *   or at the fastest speed)
   */
  frame(dtReal, speed) {
    if (dtReal > 0) this.frameMs = 0.9 * this.frameMs + 0.1 * Math.min(100, dtReal * 1000);
    this.accumulated += dtReal * speed;
  }
  /** A batch at the fastest speed: as many steps as fit in one display frame less 3 ms (at least
   * one step; the worker stops before a step that would overrun the budget). */
  fastest() {
    return { steps: 1e6, budgetMs: Math.max(4, this.frameMs - 3) };
  }
}
