// Canvas sizing for sharp drawing on any screen: the backing store is the CSS size times the
// device pixel ratio, re-measured on resize and whenever the ratio changes (zoom, moving the
// window to another screen). Drawing code works in CSS pixels (*Css); the context transform
// scales to device pixels (*Px) once.

export class HiDpiCanvas {
  /** @param {HTMLCanvasElement} canvas @param {() => void} onResize */
  constructor(canvas, onResize) {
    this.canvas = canvas;
    // Opaque: every canvas drawn through this class paints its whole area with an opaque
    // background, and an opaque canvas is copied by the compositor rather than blended over the
    // page (in headless Chromium on two cores the display compositor's share fell from 0.24 to
    // 0.16 of a core while drawing at 60 frames/s; DEVELOPERS.md).
    this.ctx = canvas.getContext("2d", { alpha: false });
    this.onResize = onResize;
    this.widthCss = 0;
    this.heightCss = 0;
    this.dpr = 1;
    new ResizeObserver(() => this.measure()).observe(canvas);
    this.armDprWatch();
    this.measure();
  }

  armDprWatch() {
    const query = matchMedia(`(resolution: ${window.devicePixelRatio || 1}dppx)`);
    query.addEventListener("change", () => { this.measure(); this.armDprWatch(); }, { once: true, passive: true });
  }

  measure() {
    const rect = this.canvas.getBoundingClientRect();
    const dpr = window.devicePixelRatio || 1;
    const widthPx = Math.max(1, Math.round(rect.width * dpr));
    const heightPx = Math.max(1, Math.round(rect.height * dpr));
    if (widthPx !== this.canvas.width || heightPx !== this.canvas.height || dpr !== this.dpr) {
      this.canvas.width = widthPx;
      this.canvas.height = heightPx;
    }
    this.widthCss = rect.width;
    this.heightCss = rect.height;
    this.dpr = dpr;
    this.onResize?.();
  }

  /** Paints the whole canvas with an opaque `background` colour and sets the CSS-pixel
   * transform; returns the context. */
  begin(background) {
    const { ctx } = this;
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.fillStyle = background;
    ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    ctx.setTransform(this.dpr, 0, 0, this.dpr, 0, 0);
    return ctx;
  }
}

/** A "nice" step (1, 2 or 5 times a power of ten) near `raw`. */
export function niceStep(raw) {
  if (!(raw > 0) || !Number.isFinite(raw)) return 1;
  const p = 10 ** Math.floor(Math.log10(raw));
  const m = raw / p;
  return (m < 1.5 ? 1 : m < 3.5 ? 2 : m < 7.5 ? 5 : 10) * p;
}
