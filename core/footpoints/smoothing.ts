// Gaussian smoothing that respects "no data": a normalised convolution (the weighted mean of the
// valid pixels under the kernel), so NaN neither spreads nor pulls values toward zero, and NaN
// pixels stay NaN. Separable: two 1-D passes, each a sum of scaled shifted rows. Given the
// thread's windowed-sum arena (core/velocity/simdWindowedSum.ts), the passes' maps lie there and
// its SIMD kernel adds the rows, two pixels at a time in the same order: the same numbers, bit
// for bit (test/footpoints/segmentation.test.ts), in about half the time at 512^2.

import type { WindowedSumArena } from '../velocity/simdWindowedSum.js';
import { windowedSumArenaBytes } from '../velocity/simdWindowedSum.js';

/**
 * Smoothed copy of `map` (nx*ny, row-major) with a Gaussian of `sigma` pixels; sigma 0 copies.
 * `arena`: scratch memory for the passes (reset here; nothing in it is kept), used when large enough.
 */
export function smoothMap(map: ArrayLike<number>, nx: number, ny: number, sigma: number, arena?: WindowedSumArena): Float64Array {
  const n = nx * ny;
  const out = new Float64Array(n);
  if (!(sigma > 0)) {
    for (let i = 0; i < n; i++) out[i] = Number.isFinite(map[i]) ? map[i] : NaN;
    return out;
  }
  // Kernel cut at 3 sigma, rounded as scipy.ndimage rounds it (int(3 sigma + 0.5)).
  const radius = Math.max(1, Math.floor(3 * sigma + 0.5));
  const kernel = new Float64Array(2 * radius + 1);
  for (let k = -radius; k <= radius; k++) kernel[k + radius] = Math.exp(-(k * k) / (2 * sigma * sigma));
  let missing = 0;
  for (let i = 0; i < n; i++) if (!Number.isFinite(map[i])) missing++;
  const simd = arena && arena.bytes >= windowedSumArenaBytes([n, n, n, n, nx, nx]) ? arena : undefined;
  simd?.reset();
  const scratch = (length: number) => (simd ? simd.alloc(length) : new Float64Array(length));
  // Without missing pixels the map is read as it is (no copies but into the arena: fewer large
  // allocations per frame).
  if (missing === 0) return smoothComplete(map, nx, ny, kernel, radius, out, simd, scratch);
  // Every value written: the arena's memory is not zeroed.
  const val = scratch(n), ok = scratch(n);
  for (let i = 0; i < n; i++) {
    const v = map[i], finite = Number.isFinite(v);
    val[i] = finite ? v : 0;
    ok[i] = finite ? 1 : 0;
  }
  // Pass 1 along x: value sums and weight sums.
  const sv = scratch(n), sw = scratch(n);
  for (let y = 0; y < ny; y++) {
    rowSums(val, nx, y, kernel, radius, sv, simd);
    rowSums(ok, nx, y, kernel, radius, sw, simd);
  }
  // Pass 2 along y, a row at a time (columnSums: each pixel's sum in the same order as a loop over k).
  const a = scratch(nx), w = scratch(nx);
  for (let y = 0; y < ny; y++) {
    columnSums(sv, nx, ny, y, kernel, radius, a, simd);
    columnSums(sw, nx, ny, y, kernel, radius, w, simd);
    for (let x = 0, i = y * nx; x < nx; x++, i++) out[i] = ok[i] ? a[x] / w[x] : NaN;
  }
  return out;
}

/**
 * Row y of into: into[y nx + x] = Sum_k kernel[k + radius] * map[y nx + x + k] over the k that stay
 * on the row, in ascending k, made as one pass along the row per k (the same sums, term for term,
 * as a loop over k per pixel); by the arena's kernel when both maps lie in it.
 */
function rowSums(map: Float64Array, nx: number, y: number, kernel: Float64Array, radius: number, into: Float64Array, simd?: WindowedSumArena): void {
  const row = y * nx;
  into.fill(0, row, row + nx);
  for (let k = -radius; k <= radius; k++) {
    const c = kernel[k + radius];
    const x0 = Math.max(0, -k), x1 = Math.min(nx, nx - k);
    if (simd?.axpy(into, c, map, x1 - x0, row + x0, row + x0 + k)) continue;
    for (let x = x0, i = row + x0, j = row + x0 + k; x < x1; x++, i++, j++) into[i] += c * map[j];
  }
}

/**
 * into[x] = Sum_k kernel[k + radius] * map[(y + k) nx + x] over the k that stay on the grid, in
 * ascending k: for a whole row at once, so that every read runs along a row (the same sums, term
 * for term, as a loop over k per pixel).
 */
function columnSums(
  map: Float64Array, nx: number, ny: number, y: number, kernel: Float64Array, radius: number, into: Float64Array, simd?: WindowedSumArena,
): void {
  const k0 = Math.max(-radius, -y), k1 = Math.min(radius, ny - 1 - y);
  into.fill(0);
  for (let k = k0; k <= k1; k++) {
    const c = kernel[k + radius];
    if (simd?.axpy(into, c, map, nx, 0, (y + k) * nx)) continue;
    for (let x = 0, j = (y + k) * nx; x < nx; x++, j++) into[x] += c * map[j];
  }
}

/**
 * The same without missing pixels: the weight sums are then a product of one sum per column and
 * one per row (the kernel cut by the grid edge), so only the values need two passes.
 */
function smoothComplete(
  val: ArrayLike<number>, nx: number, ny: number, kernel: Float64Array, radius: number, out: Float64Array,
  simd: WindowedSumArena | undefined, scratch: (length: number) => Float64Array,
): Float64Array {
  const n = nx * ny;
  const edgeSum = (len: number) => {
    const w = new Float64Array(len);
    for (let x = 0; x < len; x++) {
      const k0 = Math.max(-radius, -x), k1 = Math.min(radius, len - 1 - x);
      for (let k = k0; k <= k1; k++) w[x] += kernel[k + radius];
    }
    return w;
  };
  const wx = edgeSum(nx), wy = edgeSum(ny);
  const tmp = scratch(n);
  let values: Float64Array;
  if (simd) { values = scratch(n); values.set(val); } else values = val instanceof Float64Array ? val : Float64Array.from(val);
  for (let y = 0; y < ny; y++) {
    rowSums(values, nx, y, kernel, radius, tmp, simd);
    for (let x = 0, i = y * nx; x < nx; x++, i++) tmp[i] /= wx[x];
  }
  const a = scratch(nx);
  for (let y = 0; y < ny; y++) {
    columnSums(tmp, nx, ny, y, kernel, radius, a, simd);
    const inv = 1 / wy[y];
    for (let x = 0, i = y * nx; x < nx; x++, i++) out[i] = a[x] * inv;
  }
  return out;
}
