// A small live line plot: ring buffers per series, a sliding time window, autoscaled y with
// nice ticks, axis labels with units, and per-pixel min/max decimation.
import { HiDpiCanvas, niceStep } from "../render/canvas.js";

class Ring {
  constructor(capacity) {
    this.t = new Float64Array(capacity);
    this.v = new Float64Array(capacity);
    this.start = 0;
    this.length = 0;
  }
  push(t, v) {
    const cap = this.t.length;
    const at = (this.start + this.length) % cap;
    this.t[at] = t;
    this.v[at] = v;
    if (this.length < cap) this.length += 1;
    else this.start = (this.start + 1) % cap;
  }
  clear() { this.start = 0; this.length = 0; }
  at(i) { return (this.start + i) % this.t.length; }
}

const PAD = { left: 54, right: 10, top: 22, bottom: 30 };
const LINE_CSS = 1.8; // px, the series lines' thickness across the screen

export class TimePlot {
  /**
   * @param {HTMLCanvasElement} canvas
   * @param {{title: string, unit: string}} opts
   */
  constructor(canvas, opts) {
    this.surface = new HiDpiCanvas(canvas, () => { this.needsDraw = true; });
    this.title = opts.title;
    this.unit = opts.unit;
    this.series = [];
    this.windowSeconds = 3;
    this.needsDraw = true;
    this.colMin = new Float64Array(0);
    this.colMax = new Float64Array(0);
    this.colFirst = new Float64Array(0);
    this.colLast = new Float64Array(0);
  }

  /** Replaces the series (one per foil) and the capacity of their buffers. */
  setSeries(list, capacity, windowSeconds) {
    this.series = list.map((s) => ({ ...s, ring: new Ring(Math.max(16, capacity)) }));
    this.windowSeconds = windowSeconds;
    this.needsDraw = true;
  }

  push(k, t, v) {
    this.series[k]?.ring.push(t, v);
    this.needsDraw = true;
  }

  draw() {
    this.needsDraw = false;
    const ctx = this.surface.begin("#ffffff");
    const w = this.surface.widthCss, h = this.surface.heightCss;
    const pw = Math.max(10, w - PAD.left - PAD.right), ph = Math.max(10, h - PAD.top - PAD.bottom);
    let tEnd = 0;
    for (const s of this.series) if (s.ring.length) tEnd = Math.max(tEnd, s.ring.t[s.ring.at(s.ring.length - 1)]);
    const tStart = Math.max(0, tEnd - this.windowSeconds);
    const tSpan = Math.max(tEnd - tStart, this.windowSeconds, 1e-9);
    let lo = Infinity, hi = -Infinity;
    for (const s of this.series) {
      for (let i = 0; i < s.ring.length; i++) {
        const j = s.ring.at(i);
        if (s.ring.t[j] < tStart) continue;
        lo = Math.min(lo, s.ring.v[j]);
        hi = Math.max(hi, s.ring.v[j]);
      }
    }
    if (!Number.isFinite(lo)) { lo = -1; hi = 1; }
    if (hi - lo < 1e-12) { lo -= 0.5 * (Math.abs(lo) || 1); hi += 0.5 * (Math.abs(hi) || 1); }
    const margin = 0.06 * (hi - lo);
    lo -= margin; hi += margin;
    const xOf = (t) => PAD.left + ((t - tStart) / tSpan) * pw;
    const yOf = (v) => PAD.top + (1 - (v - lo) / (hi - lo)) * ph;

    // Axes, grid and labels.
    ctx.font = "11px system-ui, sans-serif";
    ctx.fillStyle = "#1d2430";
    ctx.font = "600 12px system-ui, sans-serif";
    ctx.fillText(this.title, PAD.left, 14);
    ctx.font = "11px system-ui, sans-serif";
    ctx.strokeStyle = "#ece8df";
    ctx.lineWidth = 1;
    const yStep = niceStep((hi - lo) / 4);
    ctx.textAlign = "right";
    for (let v = Math.ceil(lo / yStep) * yStep; v <= hi; v += yStep) {
      const y = Math.round(yOf(v)) + 0.5;
      ctx.beginPath(); ctx.moveTo(PAD.left, y); ctx.lineTo(PAD.left + pw, y); ctx.stroke();
      ctx.fillStyle = "#5d6673";
      ctx.fillText(formatTick(v, yStep), PAD.left - 5, y + 3.5);
    }
    const tStep = niceStep(tSpan / 5);
    ctx.textAlign = "center";
    for (let t = Math.ceil(tStart / tStep) * tStep; t <= tStart + tSpan + 1e-9; t += tStep) {
      const x = Math.round(xOf(t)) + 0.5;
      ctx.beginPath(); ctx.moveTo(x, PAD.top); ctx.lineTo(x, PAD.top + ph); ctx.stroke();
      ctx.fillText(formatTick(t, tStep), x, PAD.top + ph + 13);
    }
    ctx.fillText("time t (s)", PAD.left + pw / 2, h - 3);
    ctx.save();
    ctx.translate(11, PAD.top + ph / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.fillText(this.unit, 0, 0);
    ctx.restore();
    ctx.textAlign = "left";
    if (lo < 0 && hi > 0) {
      ctx.strokeStyle = "#b9b3a5";
      const y = Math.round(yOf(0)) + 0.5;
      ctx.beginPath(); ctx.moveTo(PAD.left, y); ctx.lineTo(PAD.left + pw, y); ctx.stroke();
    }
    ctx.strokeStyle = "#8a8f97";
    ctx.strokeRect(PAD.left + 0.5, PAD.top + 0.5, pw, ph);

    // Series, decimated to one min/max pair per pixel column.
    const cols = Math.ceil(pw);
    if (this.colMin.length < cols) {
      this.colMin = new Float64Array(cols); this.colMax = new Float64Array(cols);
      this.colFirst = new Float64Array(cols); this.colLast = new Float64Array(cols);
    }
    ctx.save();
    ctx.beginPath(); ctx.rect(PAD.left, PAD.top, pw, ph); ctx.clip();
    let legendX = PAD.left + pw;
    for (let k = this.series.length - 1; k >= 0; k--) {
      const s = this.series[k];
      this.colMin.fill(Infinity, 0, cols); this.colMax.fill(-Infinity, 0, cols);
      this.colFirst.fill(NaN, 0, cols);
      for (let i = 0; i < s.ring.length; i++) {
        const j = s.ring.at(i);
        const t = s.ring.t[j];
        if (t < tStart) continue;
        const c = Math.min(cols - 1, Math.max(0, Math.floor(xOf(t) - PAD.left)));
        const v = s.ring.v[j];
        if (Number.isNaN(this.colFirst[c])) this.colFirst[c] = v;
        this.colLast[c] = v;
        if (v < this.colMin[c]) this.colMin[c] = v;
        if (v > this.colMax[c]) this.colMax[c] = v;
      }
      ctx.beginPath();
      let started = false;
      for (let c = 0; c < cols; c++) {
        if (Number.isNaN(this.colFirst[c])) continue;
        const x = PAD.left + c + 0.5;
        if (!started) { ctx.moveTo(x, yOf(this.colFirst[c])); started = true; } else ctx.lineTo(x, yOf(this.colFirst[c]));
        if (this.colMax[c] > this.colMin[c]) { ctx.lineTo(x, yOf(this.colMin[c])); ctx.lineTo(x, yOf(this.colMax[c])); }
        ctx.lineTo(x, yOf(this.colLast[c]));
      }
      ctx.strokeStyle = s.color;
      strokeThick(ctx, this.surface.dpr);
    }
    ctx.restore();
    // Legend, right-aligned in the title row.
    ctx.font = "11px system-ui, sans-serif";
    for (let k = this.series.length - 1; k >= 0; k--) {
      const s = this.series[k];
      const tw = ctx.measureText(s.label).width;
      legendX -= tw;
      ctx.fillStyle = "#1d2430";
      ctx.fillText(s.label, legendX, 14);
      legendX -= 14;
      ctx.fillStyle = s.color;
      ctx.fillRect(legendX, 7, 10, 3);
      legendX -= 10;
    }
  }
}

/** Strokes the current path about LINE_CSS px thick as a few one-device-pixel lines stacked
 * down the screen. Software rasterisers draw a line one device pixel wide by a fast path;
 * a wider line is outlined and filled, which for the three plots' series took about four times
 * the page-thread time of the rest of the plots at 60 frames/s (measured in headless Chromium;
 * DEVELOPERS.md). */
function strokeThick(ctx, dpr) {
  const passes = Math.max(2, Math.round(LINE_CSS * dpr));
  ctx.lineWidth = 1 / dpr;
  for (let k = 0; k < passes; k++) {
    const dy = (k / (passes - 1)) * (LINE_CSS - 1 / dpr);
    ctx.translate(0, dy);
    ctx.stroke();
    ctx.translate(0, -dy);
  }
}

function formatTick(v, step) {
  const decimals = Math.max(0, Math.min(6, -Math.floor(Math.log10(step) + 1e-9)));
  const s = v.toFixed(decimals);
  return s === "-0" || /^-0\.0*$/.test(s) ? s.slice(1) : s;
}
