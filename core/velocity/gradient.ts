// Derivatives of a map per pixel, by fourth-order central differences
// (f(-2) - 8 f(-1) + 8 f(+1) - f(+2)) / 12. Only where the whole stencil fits: the two outer
// pixels of each line get NaN (lower-order edge formulas err by far more than the interior ones,
// and a strong feature on the edge would spoil every window that reaches it). NaN spreads to every
// derivative whose stencil touches it (a derivative across a hole is not guessed).

/** d map / d x (per pixel), x along a row. */
export function derivativeX(map: ArrayLike<number>, nx: number, ny: number, out = new Float64Array(nx * ny)): Float64Array {
  for (let y = 0; y < ny; y++) {
    const o = y * nx;
    for (let x = 0; x < nx; x++) out[o + x] = derivativeAt(map, o, x, 1, nx);
  }
  return out;
}

/** d map / d y (per pixel), y down the columns. */
export function derivativeY(map: ArrayLike<number>, nx: number, ny: number, out = new Float64Array(nx * ny)): Float64Array {
  for (let y = 0; y < ny; y++) {
    for (let x = 0; x < nx; x++) out[y * nx + x] = derivativeAt(map, x, y, nx, ny);
  }
  return out;
}

/** Derivative at position `k` of a line starting at `base` with `stride` and `n` points. */
function derivativeAt(f: ArrayLike<number>, base: number, k: number, stride: number, n: number): number {
  if (k < 2 || k > n - 3) return NaN;
  const p = base + k * stride;
  return (f[p - 2 * stride] - 8 * f[p - stride] + 8 * f[p + stride] - f[p + 2 * stride]) / 12;
}
