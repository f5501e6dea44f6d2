// Exports for reports: the run's time history as CSV (a header block with every case value,
// the definitions and units, and the finwake version, from crate/src/export.rs), the summary as
// JSON (the keys of `finwake simulate --json` plus the case, its link and the version), the
// wake view as PNG, and the three plots as SVG (drawn from the recorded history) or PNG.
//
// The history is recorded from the solver worker's own messages (a second listener on it), so
// the live view's loop stays as it is: "started" begins a new record, every "frame" of that run
// appends its steps, a frame with a summary keeps the summary.
import { pageCodec } from "../sim.js";
import { niceStep } from "../render/canvas.js";
import { download } from "./files.js";

/** Most numbers kept of one run's history (64 MB of doubles); beyond it the oldest steps go. */
const MAX_NUMBERS = 8_000_000;
const COLOURS = ["#0f6f75", "#b3404a", "#8a7a1f", "#5b4fb0", "#3f8f3f", "#b36b1f", "#9c3f8a", "#4f7fa6"];
/** Cycles the plot export shows (as the live plots do). */
const PLOT_CYCLES = 3;
const SVG_NS = "http://www.w3.org/2000/svg";

export class Exports {
  /**
   * @param {{client: import("../solver-client.js").SolverClient, state: import("../state.js").PageState,
   *          root: HTMLElement, wakeCanvas: HTMLCanvasElement, plotCanvases: HTMLCanvasElement[]}} opts
   */
  constructor({ client, state, root, wakeCanvas, plotCanvases }) {
    this.state = state;
    this.wakeCanvas = wakeCanvas;
    this.plotCanvases = plotCanvases;
    this.run = null; // { token, case, foils, stepsPerCycle, totalSteps, chunks, numbers, dropped, summary, stepsTaken }

    const row = document.createElement("div");
    row.className = "share-row";
    const label = document.createElement("span");
    label.className = "share-label";
    label.textContent = "Export";
    row.append(label);
    const add = (id, text, title, run) => {
      const b = document.createElement("button");
      b.type = "button";
      b.id = id;
      b.textContent = text;
      b.title = title;
      b.addEventListener("click", () => run().catch((e) => this.say(`The export failed: ${e.message}`)));
      row.append(b);
    };
    add("export-csv", "History CSV", "Every step's loads of every foil so far, with the case and the definitions in a header", () => this.csv());
    add("export-summary", "Summary JSON", "Cycle means as `finwake simulate --json` writes them, with the case", () => this.summaryJson());
    add("export-wake", "Wake PNG", "The wake view as a picture", () => this.wakePng());
    add("export-plots-svg", "Plots SVG", "The three plots over the last cycles, as a vector drawing", () => this.plotsSvg());
    add("export-plots-png", "Plots PNG", "The three plots as on screen", () => this.plotsPng());
    this.status = document.createElement("span");
    this.status.className = "share-status";
    this.status.id = "export-status";
    this.status.setAttribute("role", "status");
    row.append(this.status);
    root.append(row);

    client.worker?.addEventListener("message", (ev) => this.observe(ev.data));
  }

  observe(msg) {
    if (msg.type === "started") {
      const c = this.state.accepted;
      this.run = {
        token: msg.token, case: c, foils: msg.foils, stride: msg.stride, stepsPerCycle: msg.stepsPerCycle, totalSteps: msg.totalSteps,
        chunks: [], numbers: 0, dropped: 0, summary: null, stepsTaken: 0,
      };
    } else if (msg.type === "frame" && !msg.stale && this.run && msg.token === this.run.token) {
      const r = this.run;
      if (msg.records && msg.records.length > 0) {
        r.chunks.push(Float64Array.from(msg.records));
        r.numbers += msg.records.length;
        while (r.numbers > MAX_NUMBERS && r.chunks.length > 1) {
          const old = r.chunks.shift();
          r.numbers -= old.length;
          r.dropped += old.length / (1 + r.foils * r.stride);
        }
      }
      r.stepsTaken = msg.stepsTaken;
      if (msg.summary) { r.summary = msg.summary; r.summarySteps = msg.stepsTaken; }
      r.finished = msg.finished;
    }
  }

  async facts() {
    const codec = await pageCodec();
    this.fields = codec.loadFields;
    this.stride = codec.loadFields.length;
    return codec;
  }

  need() {
    if (!this.run || this.run.stepsTaken === 0) throw new Error("no step has been computed yet");
    return this.run;
  }

  async csv() {
    const codec = await this.facts();
    const r = this.need();
    const stride = this.stride;
    const names = ["time", "foil", ...this.fields.map((f) => f.replace(/ \(.*\)$/, ""))];
    const units = ["time (s)", "foil (index, 0 = fore)", ...this.fields.map((f) => (/\(/.test(f) ? f : `${f} (-)`))];
    const steps = r.numbers / (1 + r.foils * stride);
    const lines = [codec.historyHeader(JSON.stringify(r.case)).trimEnd()];
    lines.push(`# columns: ${units.join(", ")}`);
    lines.push(`# rows: ${steps} steps x ${r.foils} foil${r.foils === 1 ? "" : "s"}: steps ${r.dropped + 1} to ${r.dropped + steps} of ${r.totalSteps}${r.finished ? " (the run is complete)" : " (the run was still going)"}${r.dropped ? `; the first ${r.dropped} steps were dropped to bound memory` : ""}`);
    lines.push(`# exported from the finwake live view on ${new Date().toISOString()}`);
    lines.push(names.join(","));
    for (const chunk of r.chunks) {
      for (let s = 0; s + 1 + r.foils * stride <= chunk.length; s += 1 + r.foils * stride) {
        const t = String(chunk[s]);
        for (let i = 0; i < r.foils; i++) {
          const at = s + 1 + i * stride;
          lines.push(`${t},${i},${Array.from(chunk.subarray(at, at + stride), String).join(",")}`);
        }
      }
    }
    download(new Blob([`${lines.join("\n")}\n`], { type: "text/csv" }), "finwake-history.csv");
    this.say(`History CSV: ${steps} steps of ${r.foils} foil${r.foils === 1 ? "" : "s"}.`);
  }

  async summaryJson() {
    const codec = await this.facts();
    const r = this.need();
    if (!r.summary) throw new Error("no cycle statistics yet: wait for the first whole cycle");
    let link = null;
    try { link = `#${codec.caseToLink(JSON.stringify(r.case))}`; } catch { link = null; }
    const out = {
      finwake_version: codec.finwakeVersion(),
      exported_from: "finwake live view",
      screening_note: "2D inviscid screening estimates: not design loads",
      steps_taken: r.summarySteps,
      run_complete: r.summarySteps === r.totalSteps,
      case: r.case,
      link,
      ...r.summary,
    };
    download(new Blob([`${JSON.stringify(out, null, 2)}\n`], { type: "application/json" }), "finwake-summary.json");
    this.say(`Summary JSON after ${r.summarySteps} steps.`);
  }

  async wakePng() {
    this.need();
    download(await pngOf(this.wakeCanvas), "finwake-wake.png");
    this.say("Wake PNG saved.");
  }

  async plotsPng() {
    this.need();
    const cs = this.plotCanvases;
    const out = document.createElement("canvas");
    out.width = Math.max(...cs.map((c) => c.width));
    out.height = cs.reduce((h, c) => h + c.height, 0);
    const ctx = out.getContext("2d");
    ctx.fillStyle = "#ffffff";
    ctx.fillRect(0, 0, out.width, out.height);
    let y = 0;
    for (const c of cs) { ctx.drawImage(c, 0, y); y += c.height; }
    download(await pngOf(out), "finwake-plots.png");
    this.say("Plots PNG saved.");
  }

  async plotsSvg() {
    await this.facts();
    const r = this.need();
    const stride = this.stride;
    const per = 1 + r.foils * stride;
    const at = (name) => this.fields.findIndex((f) => f === name || f.startsWith(`${name} (`));
    const panels = [
      { title: "Thrust coefficient C_T (positive upstream)", unit: "C_T", field: at("thrust_coefficient") },
      { title: "Lift coefficient C_L (positive up)", unit: "C_L", field: at("lift_coefficient") },
      { title: "Input power P (W, screening estimate)", unit: "P (W)", field: at("power") },
    ];
    // Time window: the last PLOT_CYCLES cycles, as on screen (all of a start from rest).
    const times = [];
    for (const chunk of r.chunks) for (let s = 0; s + per <= chunk.length; s += per) times.push(chunk[s]);
    const tEnd = times[times.length - 1];
    const f = r.case.frequency;
    const tStart = f > 0 ? Math.max(times[0], tEnd - PLOT_CYCLES / f) : times[0];
    const W = 760, H = 230, L = 70, R = 16, T = 28, B = 40;
    const svg = document.createElementNS(SVG_NS, "svg");
    svg.setAttribute("xmlns", SVG_NS);
    svg.setAttribute("width", String(W));
    svg.setAttribute("height", String(H * panels.length + 24));
    svg.setAttribute("viewBox", `0 0 ${W} ${H * panels.length + 24}`);
    svg.setAttribute("font-family", "system-ui, sans-serif");
    svg.setAttribute("font-size", "11");
    el(svg, "rect", { x: 0, y: 0, width: W, height: H * panels.length + 24, fill: "#ffffff" });
    el(svg, "text", { x: 8, y: H * panels.length + 16, fill: "#5d6673" }).textContent =
      `finwake: ${r.foils} foil${r.foils === 1 ? "" : "s"}, U = ${r.case.flow.speed} m/s, f = ${f} Hz; t = ${fmt(tStart)} to ${fmt(tEnd)} s; 2D inviscid screening estimates`;
    panels.forEach((p, k) => {
      const g = el(svg, "g", { transform: `translate(0 ${k * H})`, "data-plot": p.unit });
      const pw = W - L - R, ph = H - T - B;
      let lo = Infinity, hi = -Infinity;
      const series = Array.from({ length: r.foils }, () => []);
      for (const chunk of r.chunks) {
        for (let s = 0; s + per <= chunk.length; s += per) {
          const t = chunk[s];
          if (t < tStart) continue;
          for (let i = 0; i < r.foils; i++) {
            const v = chunk[s + 1 + i * stride + p.field];
            series[i].push([t, v]);
            if (Number.isFinite(v)) { lo = Math.min(lo, v); hi = Math.max(hi, v); }
          }
        }
      }
      if (!Number.isFinite(lo)) { lo = -1; hi = 1; }
      if (hi - lo < 1e-12) { lo -= 0.5 * (Math.abs(lo) || 1); hi += 0.5 * (Math.abs(hi) || 1); }
      const m = 0.06 * (hi - lo);
      lo -= m; hi += m;
      const span = Math.max(tEnd - tStart, 1e-9);
      const xOf = (t) => L + ((t - tStart) / span) * pw;
      const yOf = (v) => T + (1 - (v - lo) / (hi - lo)) * ph;
      el(g, "text", { x: L, y: 16, "font-weight": "600", "font-size": "12", fill: "#1d2430" }).textContent = p.title;
      const yStep = niceStep((hi - lo) / 4);
      for (let v = Math.ceil(lo / yStep) * yStep; v <= hi; v += yStep) {
        el(g, "line", { x1: L, x2: L + pw, y1: yOf(v), y2: yOf(v), stroke: "#ece8df" });
        el(g, "text", { x: L - 5, y: yOf(v) + 3.5, "text-anchor": "end", fill: "#5d6673" }).textContent = tick(v, yStep);
      }
      const tStep = niceStep(span / 5);
      for (let t = Math.ceil(tStart / tStep) * tStep; t <= tEnd + 1e-9; t += tStep) {
        el(g, "line", { x1: xOf(t), x2: xOf(t), y1: T, y2: T + ph, stroke: "#ece8df" });
        el(g, "text", { x: xOf(t), y: T + ph + 14, "text-anchor": "middle", fill: "#5d6673" }).textContent = tick(t, tStep);
      }
      el(g, "text", { x: L + pw / 2, y: H - 8, "text-anchor": "middle", fill: "#1d2430" }).textContent = "time t (s)";
      el(g, "text", { x: 14, y: T + ph / 2, "text-anchor": "middle", fill: "#1d2430", transform: `rotate(-90 14 ${T + ph / 2})` }).textContent = p.unit;
      if (lo < 0 && hi > 0) el(g, "line", { x1: L, x2: L + pw, y1: yOf(0), y2: yOf(0), stroke: "#b9b3a5" });
      el(g, "rect", { x: L, y: T, width: pw, height: ph, fill: "none", stroke: "#8a8f97" });
      series.forEach((pts, i) => {
        const line = el(g, "polyline", { fill: "none", stroke: COLOURS[i % COLOURS.length], "stroke-width": "1.6", "data-foil": String(i) });
        line.setAttribute("points", pts.map(([t, v]) => `${xOf(t).toFixed(2)},${yOf(v).toFixed(2)}`).join(" "));
        const lx = L + pw - 70 * (r.foils - i);
        el(g, "rect", { x: lx, y: 9, width: 10, height: 3, fill: COLOURS[i % COLOURS.length] });
        el(g, "text", { x: lx + 14, y: 14, fill: "#1d2430" }).textContent = `foil ${i}`;
      });
    });
    const text = `<?xml version="1.0" encoding="UTF-8"?>\n${new XMLSerializer().serializeToString(svg)}\n`;
    download(new Blob([text], { type: "image/svg+xml" }), "finwake-plots.svg");
    this.say("Plots SVG saved.");
  }

  say(text) {
    this.status.textContent = text;
  }
}

function el(parent, name, attrs) {
  const e = document.createElementNS(SVG_NS, name);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, typeof v === "number" ? String(Number(v.toFixed(2))) : v);
  parent.append(e);
  return e;
}

function pngOf(canvas) {
  return new Promise((ok, fail) => canvas.toBlob((b) => (b ? ok(b) : fail(new Error("the canvas could not be encoded as PNG"))), "image/png"));
}

function tick(v, step) {
  const decimals = Math.max(0, Math.min(6, -Math.floor(Math.log10(step) + 1e-9)));
  const s = v.toFixed(decimals);
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s;
}

function fmt(v) {
  return String(Number(v.toPrecision(4)));
}
