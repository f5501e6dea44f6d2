// Anti-aliased discs written straight into an RGBA pixel buffer (ImageData's layout: R, G, B, A
// bytes, rows top to bottom). Pixel (k, j) covers [k, k + 1) x [j, j + 1) in device pixels, the
// convention of the canvas's own paths, so a disc lands where `arc` would put it. A pixel is
// blended by the fraction of it the disc covers, approximated by a ramp one pixel wide across the
// rim: coverage = clamp(r + 1/2 - d, 0, 1) at distance d of the pixel's centre from the disc's.

/**
 * Blends one disc over an opaque buffer.
 * @param {Uint8ClampedArray} bytes  RGBA bytes, width * height * 4
 * @param {number} width  px
 * @param {number} height  px
 * @param {number} x  px, centre across
 * @param {number} y  px, centre down
 * @param {number} r  px, radius
 * @param {number[]} rgb  colour, three bytes
 * @param {number} alpha  opacity of the fully covered pixels, 0 to 1
 */
export function stampDisc(bytes, width, height, x, y, r, rgb, alpha) {
  const reach = r + 0.5;
  const k0 = Math.max(0, Math.floor(x - reach)), k1 = Math.min(width - 1, Math.floor(x + reach));
  const j0 = Math.max(0, Math.floor(y - reach)), j1 = Math.min(height - 1, Math.floor(y + reach));
  const [cr, cg, cb] = rgb;
  for (let j = j0; j <= j1; j++) {
    const dy = j + 0.5 - y;
    for (let k = k0; k <= k1; k++) {
      const dx = k + 0.5 - x;
      const cover = reach - Math.sqrt(dx * dx + dy * dy);
      if (cover <= 0) continue;
      const a = alpha * Math.min(1, cover);
      const o = 4 * (j * width + k);
      bytes[o] += (cr - bytes[o]) * a;
      bytes[o + 1] += (cg - bytes[o + 1]) * a;
      bytes[o + 2] += (cb - bytes[o + 2]) * a;
    }
  }
}
