// Bicubic (Catmull-Rom) interpolation of a row-major map with its gradient, for sub-pixel pattern
// fits. A sample whose 4x4 support leaves the grid or touches a NaN is invalid.

// The four Catmull-Rom weights at fraction t (small functions the compiler inlines: both samplers
// below use these very expressions, so their values agree bit for bit).
const w0 = (t: number) => ((-0.5 * t + 1) * t - 0.5) * t;
const w1 = (t: number) => (1.5 * t - 2.5) * t * t + 1;
const w2 = (t: number) => ((-1.5 * t + 2) * t + 0.5) * t;
const w3 = (t: number) => (0.5 * t - 0.5) * t * t;

/** Writes [value, d/dx, d/dy] (per pixel) at pixel coordinates (px, py) into out; false when invalid. */
export function sampleCubic(map: ArrayLike<number>, nx: number, ny: number, px: number, py: number, out: Float64Array): boolean {
  const ix = Math.floor(px), iy = Math.floor(py);
  if (ix < 1 || iy < 1 || ix + 2 >= nx || iy + 2 >= ny) return false;
  const tx = px - ix, ty = py - iy;
  const wx0 = w0(tx), wx1 = w1(tx), wx2 = w2(tx), wx3 = w3(tx);
  const dx0 = (-1.5 * tx + 2) * tx - 0.5, dx1 = (4.5 * tx - 5) * tx;
  const dx2 = (-4.5 * tx + 4) * tx + 0.5, dx3 = (1.5 * tx - 1) * tx;
  // Row weights as scalars (no array per sample: this runs for every window pixel of every fit step).
  const wy0 = w0(ty), wy1 = w1(ty), wy2 = w2(ty), wy3 = w3(ty);
  const dy0 = (-1.5 * ty + 2) * ty - 0.5, dy1 = (4.5 * ty - 5) * ty;
  const dy2 = (-4.5 * ty + 4) * ty + 0.5, dy3 = (1.5 * ty - 1) * ty;
  let v = 0, gx = 0, gy = 0;
  let row = (iy - 1) * nx + ix - 1;
  for (let k = 0; k < 4; k++, row += nx) {
    const a = map[row], b = map[row + 1], c = map[row + 2], d = map[row + 3];
    const h = wx0 * a + wx1 * b + wx2 * c + wx3 * d;
    if (!Number.isFinite(h)) return false;
    const hd = dx0 * a + dx1 * b + dx2 * c + dx3 * d;
    const w = k === 0 ? wy0 : k === 1 ? wy1 : k === 2 ? wy2 : wy3;
    const dw = k === 0 ? dy0 : k === 1 ? dy1 : k === 2 ? dy2 : dy3;
    v += w * h;
    gy += dw * h;
    gx += w * hd;
  }
  out[0] = v; out[1] = gx; out[2] = gy;
  return true;
}

/**
 * The value of sampleCubic alone (the same operations, so the same number), NaN where sampleCubic
 * is invalid: the pattern fit's angle scan needs no gradient.
 */
export function sampleCubicValue(map: ArrayLike<number>, nx: number, ny: number, px: number, py: number): number {
  const ix = Math.floor(px), iy = Math.floor(py);
  if (ix < 1 || iy < 1 || ix + 2 >= nx || iy + 2 >= ny) return NaN;
  const tx = px - ix, ty = py - iy;
  const wx0 = w0(tx), wx1 = w1(tx), wx2 = w2(tx), wx3 = w3(tx);
  const wy0 = w0(ty), wy1 = w1(ty), wy2 = w2(ty), wy3 = w3(ty);
  let v = 0;
  let row = (iy - 1) * nx + ix - 1;
  for (let k = 0; k < 4; k++, row += nx) {
    const h = wx0 * map[row] + wx1 * map[row + 1] + wx2 * map[row + 2] + wx3 * map[row + 3];
    if (!Number.isFinite(h)) return NaN;
    v += (k === 0 ? wy0 : k === 1 ? wy1 : k === 2 ? wy2 : wy3) * h;
  }
  return v;
}
