// Derivatives of a map per pixel, by fourth-order central differences
// (f(-2) - 8 f(-1) + 8 f(+1) - f(+2)) / 12, second-order central one pixel from an edge and
// one-sided first differences on the edge itself. NaN spreads to every derivative whose stencil
// touches it (a derivative across a hole is not guessed).

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
  const at = (j: number) => f[base + j * stride];
  if (n < 2) return 0;
  if (k >= 2 && k <= n - 3) return (at(k - 2) - 8 * at(k - 1) + 8 * at(k + 1) - at(k + 2)) / 12;
  if (k >= 1 && k <= n - 2) return (at(k + 1) - at(k - 1)) / 2;
  return k === 0 ? at(1) - at(0) : at(n - 1) - at(n - 2);
}
