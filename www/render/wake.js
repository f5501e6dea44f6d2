// The wake view: foils to scale at their instantaneous pose and the free vortex particles,
// coloured by rotation sense and shaded by strength. World coordinates (*World) are metres,
// flow along +x, y up; the one y-flip is in toCssY().
import { HiDpiCanvas, niceStep } from "./canvas.js";
import { stampDisc } from "./discs.js";

const BG = "#0f1822";
const CCW = [255, 162, 76]; // counter-clockwise, circulation > 0
const CW = [92, 200, 245]; // clockwise, circulation < 0
const SHADES = 6; // strength bins per sense, shaded from faint to full
// BG as one RGBA pixel in the byte order of the platform (ImageData is R, G, B, A in memory).
const BG_PIXEL = new Uint32Array(new Uint8ClampedArray([0x0f, 0x18, 0x22, 0xff]).buffer)[0];
const FOIL_COLOURS = ["#2bb3b9", "#e06a73", "#c7b96b", "#9b8fe0", "#7fc77f", "#e0a15c", "#d07fc0", "#8fb3d9"];

export class WakeView {
  constructor(canvas) {
    this.surface = new HiDpiCanvas(canvas, () => { this.needsDraw = true; });
    this.canvas = canvas;
    this.centreWorld = [0.5, 0];
    this.cssPerMetre = 400;
    this.outlines = [];
    this.particles = new Float64Array(0);
    this.pivots = [];
    this.speed = 0;
    this.coreWorld = 0.005;
    this.userMoved = false;
    this.needsDraw = true;
    this.image = null; // ImageData of the background and particles, the canvas's size
    this.wireInput();
  }

  /** New scene data (copies owned by the view). */
  setScene(outlines, particles) {
    this.outlines = outlines;
    this.particles = particles;
    this.needsDraw = true;
  }

  /** Case facts the view needs: pivot fractions, flow speed, core size, and a frame to fit. */
  setCase(caseObj) {
    this.pivots = caseObj.foils.map((f) => f.pivot);
    this.speed = caseObj.flow.speed;
    const cMin = Math.min(...caseObj.foils.map((f) => f.chord));
    this.coreWorld = (caseObj.numerics?.core_size ?? 0.05) * cMin;
    this.fitBox = fitBox(caseObj);
    if (!this.userMoved) this.fit();
    this.needsDraw = true;
  }

  fit() {
    const b = this.fitBox;
    if (!b) return;
    const w = Math.max(this.surface.widthCss, 50);
    const h = Math.max(this.surface.heightCss, 50);
    this.cssPerMetre = Math.min(w / (b.x1 - b.x0), h / (b.y1 - b.y0));
    this.centreWorld = [(b.x0 + b.x1) / 2, (b.y0 + b.y1) / 2];
    this.needsDraw = true;
  }

  toCssX(xWorld) { return (xWorld - this.centreWorld[0]) * this.cssPerMetre + this.surface.widthCss / 2; }
  toCssY(yWorld) { return this.surface.heightCss / 2 - (yWorld - this.centreWorld[1]) * this.cssPerMetre; }
  toWorld(xCss, yCss) {
    return [
      (xCss - this.surface.widthCss / 2) / this.cssPerMetre + this.centreWorld[0],
      (this.surface.heightCss / 2 - yCss) / this.cssPerMetre + this.centreWorld[1],
    ];
  }

  zoomAt(factor, xCss, yCss) {
    const before = this.toWorld(xCss, yCss);
    this.cssPerMetre = Math.min(1e6, Math.max(5, this.cssPerMetre * factor));
    const after = this.toWorld(xCss, yCss);
    this.centreWorld[0] += before[0] - after[0];
    this.centreWorld[1] += before[1] - after[1];
    this.userMoved = true;
    this.needsDraw = true;
  }

  panCss(dxCss, dyCss) {
    this.centreWorld[0] -= dxCss / this.cssPerMetre;
    this.centreWorld[1] += dyCss / this.cssPerMetre;
    this.userMoved = true;
    this.needsDraw = true;
  }

  wireInput() {
    const c = this.canvas;
    let drag = null;
    c.addEventListener("pointerdown", (e) => { drag = [e.clientX, e.clientY]; c.setPointerCapture(e.pointerId); }, { passive: true });
    c.addEventListener("pointermove", (e) => {
      if (!drag) return;
      this.panCss(e.clientX - drag[0], e.clientY - drag[1]);
      drag = [e.clientX, e.clientY];
    }, { passive: true });
    const end = () => { drag = null; };
    c.addEventListener("pointerup", end, { passive: true });
    c.addEventListener("pointercancel", end, { passive: true });
    // Not passive: the wheel zooms the view instead of scrolling the page.
    c.addEventListener("wheel", (e) => {
      e.preventDefault();
      const r = c.getBoundingClientRect();
      this.zoomAt(Math.exp(-e.deltaY * 0.0015), e.clientX - r.left, e.clientY - r.top);
    }, { passive: false });
    c.addEventListener("keydown", (e) => {
      const w = this.surface.widthCss, h = this.surface.heightCss;
      const stepCss = e.shiftKey ? 120 : 40;
      const keys = {
        ArrowLeft: () => this.panCss(stepCss, 0), ArrowRight: () => this.panCss(-stepCss, 0),
        ArrowUp: () => this.panCss(0, stepCss), ArrowDown: () => this.panCss(0, -stepCss),
        "+": () => this.zoomAt(1.25, w / 2, h / 2), "=": () => this.zoomAt(1.25, w / 2, h / 2),
        "-": () => this.zoomAt(0.8, w / 2, h / 2), _: () => this.zoomAt(0.8, w / 2, h / 2),
        0: () => { this.userMoved = false; this.fit(); },
      };
      const act = keys[e.key];
      if (act) { e.preventDefault(); act(); }
    });
  }

  draw() {
    this.needsDraw = false;
    const w = this.surface.widthCss, h = this.surface.heightCss;
    // The background and the particles are written as pixels, then the foils, labels and scale
    // are drawn over them with the canvas's paths and text.
    this.drawBackgroundAndParticles();
    const ctx = this.surface.ctx;
    ctx.setTransform(this.surface.dpr, 0, 0, this.surface.dpr, 0, 0);
    this.drawFoils(ctx);
    this.drawScale(ctx, w, h);
  }

  /**
   * Fills the canvas with the background and the particles as discs, written straight into an
   * image buffer (one `putImageData` a frame). The background and 450 particles take 0.6 ms a
   * frame this way against 2.5 ms with the canvas's own fill and arc fills in a software
   * rasteriser (3.4 against 11 ms for 4,000 particles in view; measured in headless Chromium,
   * DEVELOPERS.md): drawing at the display rate on two cores cannot afford the difference. A
   * disc's rim pixels are blended by their covered fraction (discs.js), so the discs keep the
   * smooth edges of the canvas's anti-aliased fills.
   */
  drawBackgroundAndParticles() {
    const { canvas, dpr } = this.surface;
    const W = canvas.width, H = canvas.height;
    if (!this.image || this.image.width !== W || this.image.height !== H) {
      this.image = this.surface.ctx.createImageData(W, H);
      this.pixels = new Uint32Array(this.image.data.buffer);
    }
    const bytes = this.image.data;
    this.pixels.fill(BG_PIXEL);
    const p = this.particles;
    const n = Math.floor(p.length / 3);
    let gMax = 0;
    for (let i = 0; i < n; i++) gMax = Math.max(gMax, Math.abs(p[2 * n + i]));
    if (n > 0 && gMax > 0) {
      const r = dpr * Math.min(4.5, Math.max(1.3, 0.7 * this.coreWorld * this.cssPerMetre)); // device px
      const reach = r + 0.5;
      for (let i = 0; i < n; i++) {
        const g = p[2 * n + i];
        // Device-pixel position; pixel (k, j) covers [k, k + 1) x [j, j + 1).
        const x = this.toCssX(p[i]) * dpr, y = this.toCssY(p[n + i]) * dpr;
        if (x < -reach || y < -reach || x > W + reach || y > H + reach) continue;
        const level = Math.min(SHADES - 1, Math.floor((Math.abs(g) / gMax) * SHADES));
        const alpha = 0.22 + 0.78 * Math.sqrt((level + 1) / SHADES);
        stampDisc(bytes, W, H, x, y, r, g >= 0 ? CCW : CW, alpha);
      }
    }
    this.surface.ctx.putImageData(this.image, 0, 0);
  }

  drawFoils(ctx) {
    this.outlines.forEach((o, k) => {
      const m = o.length / 2;
      if (m < 3) return;
      ctx.beginPath();
      ctx.moveTo(this.toCssX(o[0]), this.toCssY(o[1]));
      for (let j = 1; j < m; j++) ctx.lineTo(this.toCssX(o[2 * j]), this.toCssY(o[2 * j + 1]));
      ctx.closePath();
      ctx.fillStyle = "#e8edf1";
      ctx.fill();
      ctx.lineWidth = 1.5;
      ctx.strokeStyle = FOIL_COLOURS[k % FOIL_COLOURS.length];
      ctx.stroke();
      // Chord line and pivot: trailing edge is node 0, the leading edge node m/2.
      const te = [o[0], o[1]];
      const le = [o[2 * Math.floor(m / 2)], o[2 * Math.floor(m / 2) + 1]];
      const f = this.pivots[k] ?? 0.25;
      const pv = [le[0] + f * (te[0] - le[0]), le[1] + f * (te[1] - le[1])];
      ctx.beginPath();
      ctx.arc(this.toCssX(pv[0]), this.toCssY(pv[1]), 2.5, 0, 2 * Math.PI);
      ctx.fillStyle = "#1d2430";
      ctx.fill();
      // Label above the leading edge, outlined in the background colour to stay legible over
      // the wake.
      const lx = this.toCssX(le[0]) - 8, ly = this.toCssY(Math.max(le[1], te[1])) - 14;
      ctx.font = "600 12px system-ui, sans-serif";
      ctx.lineWidth = 3;
      ctx.strokeStyle = BG;
      ctx.strokeText(`foil ${k}`, lx, ly);
      ctx.fillStyle = FOIL_COLOURS[k % FOIL_COLOURS.length];
      ctx.fillText(`foil ${k}`, lx, ly);
    });
  }

  drawScale(ctx, w, h) {
    const lenWorld = niceStep(110 / this.cssPerMetre);
    const lenCss = lenWorld * this.cssPerMetre;
    const x0 = 14, y0 = h - 16;
    ctx.strokeStyle = "#dfe6ec";
    ctx.fillStyle = "#dfe6ec";
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(x0, y0 - 4); ctx.lineTo(x0, y0); ctx.lineTo(x0 + lenCss, y0); ctx.lineTo(x0 + lenCss, y0 - 4);
    ctx.stroke();
    ctx.font = "12px system-ui, sans-serif";
    ctx.fillText(formatLength(lenWorld), x0 + 4, y0 - 6);
    // Flow direction.
    const ax = w - 150, ay = h - 18;
    ctx.beginPath();
    ctx.moveTo(ax, ay); ctx.lineTo(ax + 40, ay);
    ctx.moveTo(ax + 34, ay - 4); ctx.lineTo(ax + 40, ay); ctx.lineTo(ax + 34, ay + 4);
    ctx.stroke();
    ctx.fillText(`U = ${this.speed.toFixed(2)} m/s`, ax + 46, ay + 4);
  }
}

function formatLength(m) {
  if (m >= 1) return `${Number(m.toPrecision(3))} m`;
  if (m >= 0.01) return `${Number((m * 100).toPrecision(3))} cm`;
  return `${Number((m * 1000).toPrecision(3))} mm`;
}

/** World box to fit: the foils with their heave, a chord upstream, eight chords of wake. */
function fitBox(caseObj) {
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (const f of caseObj.foils) {
    x0 = Math.min(x0, f.x - f.chord);
    x1 = Math.max(x1, f.x + f.chord);
    y0 = Math.min(y0, f.y - f.heave - 0.8 * f.chord);
    y1 = Math.max(y1, f.y + f.heave + 0.8 * f.chord);
  }
  const last = caseObj.foils[caseObj.foils.length - 1];
  x1 = Math.max(x1, last.x + 9 * last.chord);
  return { x0, x1, y0, y1 };
}
