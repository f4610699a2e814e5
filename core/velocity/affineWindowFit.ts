// The windowed least-squares fit shared by the affine velocity estimators. The model at every
// window centre is  target + Sum_p a_p psi_p = 0  (the residual of the evolution equation), where
// each column psi_p is a short sum of terms  coef * x^px * y^py * channel  with x, y the pixel
// offsets from the window centre. Minimising Sum w (target + psi . a)^2 gives the normal equations
// M a = -b with M_pq = Sum w psi_p psi_q and b_p = Sum w psi_p target; every entry is a sum of
// windowed moments  Sum w x^m y^n q_j q_k, each of them one separable convolution (two 1-D passes),
// computed once and shared by all entries that need it. Pixels where any channel is NaN leave
// every window (see windowedSum's NaN policy); centres that are such pixels get NaN.
//
// Noisy regressors bias ordinary least squares toward zero (errors in variables): the expected
// value of a windowed moment Sum w x^m y^n q_j q_j carries the noise variance of channel j times
// Sum w x^m y^n. Given each channel's noise variance per pixel (channels whose noise is
// uncorrelated at a pixel, as central differences with a zero centre tap are with the field
// itself), that expectation is subtracted from the normal matrix: the corrected (consistent)
// least-squares estimator of the errors-in-variables literature (e.g. Fuller 1987, Measurement
// Error Models). A window where the correction leaves the matrix not positive definite has too
// little signal above the noise and is counted as ill-conditioned.

import type { AffineFitWorkspace } from './fitWindowPasses.js';
import { createAffineFitWorkspace, fitWindowPasses } from './fitWindowPasses.js';
import { gaussianTaps, windowRadius } from './windowedSum.js';

export interface ModelTerm {
  readonly coef: number;
  /** Index into the channel list. */
  readonly channel: number;
  /** Powers of the window offsets x, y. */
  readonly px: number;
  readonly py: number;
}

/** A windowed moment Sum w x^px y^py q_j q_k and the matrix entries it adds to. */
interface Moment {
  readonly j: number;
  readonly k: number;
  readonly px: number;
  readonly py: number;
  readonly uses: { entry: number; coef: number }[];
}

/** One column psi_p of the model (or the target): a sum of terms. */
export type ModelColumn = readonly ModelTerm[];

export interface AffineFitResult {
  /** Fitted parameters a_p per pixel (only those asked for), NaN where no fit. */
  readonly params: Float64Array[];
  /** Pixels that had valid channels at the centre but an ill-conditioned window. */
  readonly illConditioned: number;
  /** The centres solved (pixel indices, ascending): params are NaN everywhere else. */
  readonly centres: Int32Array;
}

export interface AffineFitOptions {
  /**
   * The caller's workspace (core/velocity/fitWindowPasses.ts): with one that asks for SIMD, the
   * windowed sums run in WebAssembly SIMD kernels in its memory, kept for the next fit. The same
   * numbers bit for bit either way.
   */
  readonly workspace?: AffineFitWorkspace;
  /**
   * Without a workspace: true makes one for this fit alone (SIMD kernels in fresh memory, which on
   * a large grid costs more than they save), false or absent keeps the TypeScript loops.
   */
  readonly simd?: boolean;
}

/**
 * Fits `columns` (n of them) to `target` in Gaussian windows of width `sigma` pixels around every
 * pixel. Returns maps of the parameters listed in `wanted` (cheapest to check when they are the
 * last columns). With M scaled to unit diagonal, a
 * window is ill-conditioned when a wanted parameter p has 1 / [M^-1]_pp < `minPivot` (its column
 * is almost a combination of the others). `ridge[p]` (relative to the unit diagonal) is a penalty on
 * parameter p: it makes the fit prefer small values of it where the data leave it undetermined.
 * With `solveAt`, only centres where it is non-zero are solved (the others stay NaN).
 */
export function affineWindowFit(
  channels: readonly ArrayLike<number>[], nx: number, ny: number,
  columns: readonly ModelColumn[], target: ModelColumn,
  sigma: number, minPivot: number, wanted: readonly number[], ridge: readonly number[] = columns.map(() => 0),
  solveAt?: Uint8Array, noiseVariance?: readonly number[], options: AffineFitOptions = {},
): AffineFitResult {
  const n = columns.length;
  const size = nx * ny;
  const all = [...columns, target];
  // Entry layout per pixel: upper triangle of M (p <= q < n), then b (n values).
  const entryIndex = (p: number, q: number) => (q === n ? (n * (n + 1)) / 2 + p : (q * (q + 1)) / 2 + p);
  const entries = (n * (n + 1)) / 2 + n;

  // Which moment (channel pair, powers) feeds which entry with which coefficient.
  const moments = new Map<string, Moment>();
  for (let q = 0; q <= n; q++) {
    for (let p = 0; p <= Math.min(q, n - 1); p++) {
      const entry = entryIndex(p, q);
      for (const t1 of all[p]) for (const t2 of all[q]) {
        const j = Math.min(t1.channel, t2.channel), k = Math.max(t1.channel, t2.channel);
        const px = t1.px + t2.px, py = t1.py + t2.py;
        const key = `${j},${k},${px},${py}`;
        let m = moments.get(key);
        if (!m) { m = { j, k, px, py, uses: [] }; moments.set(key, m); }
        m.uses.push({ entry, coef: t1.coef * t2.coef });
      }
    }
  }

  const valid = new Uint8Array(size).fill(1);
  for (const c of channels) markInvalid(c, valid);

  // The fit is needed at the centres to solve only: the windowed sums are evaluated there (the
  // column pass at those pixels, the row pass at the pixels their column windows read), in the same order
  // as a full pass, so the numbers are those of the sums over the whole map.
  let count = 0;
  for (let i = 0; i < size; i++) if (valid[i] && (solveAt === undefined || solveAt[i] !== 0)) count++;
  const centres = new Int32Array(count);
  for (let i = 0, k = 0; i < size; i++) if (valid[i] && (solveAt === undefined || solveAt[i] !== 0)) centres[k++] = i;
  const r = windowRadius(sigma);
  const rowsNeeded = columnWindowsReach(centres, nx, ny, r);
  // The row passes read the products on [spanFrom, spanTo) of each row only (the needed pixels
  // and r beyond them): the products are formed there alone.
  const spanFrom = new Int32Array(ny), spanTo = new Int32Array(ny);
  for (let y = 0; y < ny; y++) {
    let first = -1, last = -1;
    for (let x = 0, i = y * nx; x < nx; x++, i++) if (rowsNeeded[i]) { if (first < 0) first = x; last = x; }
    if (first >= 0) { spanFrom[y] = y * nx + Math.max(0, first - r); spanTo[y] = y * nx + Math.min(nx, last + r + 1); }
  }
  const taps: Float64Array[] = [0, 1, 2, 3, 4].map((power) => gaussianTaps(sigma, r, power));
  const xPowers = [...new Set([...moments.values()].map((m) => m.px))].sort((a, b) => a - b);
  // Group the moments by channel pair: a product is made once, its row passes for every power of
  // x in one sweep, and the column passes of each row-passed map in one sweep; the moments are
  // then added into the entries in their own order (the order of the sums is that of one moment
  // at a time).
  const byPair = new Map<string, Moment[]>();
  for (const m of moments.values()) {
    const key = `${m.j},${m.k}`;
    const list = byPair.get(key) ?? [];
    list.push(m);
    byPair.set(key, list);
  }
  const mostPerPair = Math.max(0, ...[...byPair.values()].map((list) => list.length));

  // Buffers: in the workspace's WebAssembly memory when the SIMD kernels run (kept between fits),
  // else plain arrays. Each large block is one allocation (every large allocation may cost a
  // young-generation GC); `lengths` below lists every one of them, so the memory holds them all.
  const workspace = options.workspace ?? (options.simd ? createAffineFitWorkspace({ simd: true }) : undefined);
  // The moments whose noise the correction removes (a channel with itself, of known variance).
  const noisyMoments = noiseVariance ? [...moments.values()].filter((m) => m.j === m.k && (noiseVariance[m.j] ?? 0) > 0) : [];
  const noisyKeys = new Set(noisyMoments.map((m) => `${m.px},${m.py}`)).size;
  const passes = fitWindowPasses(workspace, nx, ny, r, rowsNeeded, centres, [
    size, size * xPowers.length, entries * count, mostPerPair * count,
    n * count, wanted.length * count, count, noisyKeys > 0 ? size : 0, ...Array.from({ length: noisyKeys }, () => count)]);
  const parts = (all: Float64Array, length: number, count: number) => Array.from({ length: count }, (_, e) => all.subarray(e * length, (e + 1) * length));
  const block = (length: number, count: number, zeroed = false) => parts(passes.alloc(length * count, zeroed), length, count);
  const [product] = block(size, 1);
  // Row-pass buffers, one per power of x the moments use, and one column-pass output per moment of
  // a channel pair; one compact array per matrix entry (entry-major, one value per centre), so that
  // adding a moment into an entry is one contiguous loop.
  const rowBlock = block(size, xPowers.length);
  const rowBuffers: Float64Array[] = [];
  xPowers.forEach((px, e) => { rowBuffers[px] = rowBlock[e]; });
  const rowBuffer = (power: number) => (rowBuffers[power] ??= new Float64Array(size));
  const sumBlock = passes.alloc(count * entries, true);
  const sums = parts(sumBlock, count, entries);
  const columnOut = block(count, mostPerPair);
  for (const list of byPair.values()) {
    const a = channels[list[0].j], b = channels[list[0].k];
    for (let y = 0; y < ny; y++) passes.product(product, a, b, valid, spanFrom[y], spanTo[y]);
    const powers = [...new Set(list.map((m) => m.px))];
    passes.rows(product, powers.map((px) => taps[px]), powers.map(rowBuffer));
    for (const px of powers) {
      const at = list.map((m, e) => (m.px === px ? e : -1)).filter((e) => e >= 0);
      passes.columns(rowBuffer(px), at.map((e) => taps[list[e].py]), at.map((e) => columnOut[e]));
    }
    list.forEach((m, e) => {
      const column = columnOut[e];
      for (const u of m.uses) passes.axpy(sums[u.entry], u.coef, column, count);
    });
  }

  // Before the noise correction, the diagonal (to judge how much of it was noise).
  const rawBlock = noiseVariance ? passes.alloc(n * count) : undefined;
  const rawDiag = rawBlock ? parts(rawBlock, count, n) : undefined;
  rawDiag?.forEach((raw, p) => raw.set(sums[entryIndex(p, p)]));
  if (noisyMoments.length > 0) {
    // Expected noise in the moments Sum w x^px y^py q_j q_j: variance_j times the window's own
    // moment over the valid pixels (valid as 1.0 / 0.0 in the passes' memory: the same sums).
    const validMap = passes.alloc(size);
    for (let y = 0; y < ny; y++) for (let i = spanFrom[y]; i < spanTo[y]; i++) validMap[i] = valid[i];
    const validMoment = new Map<string, Float64Array>();
    for (const m of noisyMoments) {
      const v = noiseVariance![m.j];
      const key = `${m.px},${m.py}`;
      let w = validMoment.get(key);
      if (!w) {
        w = passes.alloc(count);
        passes.rows(validMap, [taps[m.px]], [rowBuffer(0)]);
        passes.columns(rowBuffer(0), [taps[m.py]], [w]);
        validMoment.set(key, w);
      }
      // target - c w, as target + (-c) w: the same rounding (IEEE subtraction adds the negation).
      for (const u of m.uses) passes.axpy(sums[u.entry], -(u.coef * v), w, count);
    }
  }

  const params = wanted.map(() => new Float64Array(size).fill(NaN));
  let illConditioned = 0;
  // The SIMD kernel, two centres at a time, when the passes have one; else one centre at a time here.
  const solver = passes.centreSolver?.({ n, wanted, diagonalAdd: ridge.map((v) => RIDGE + v), minSignalShare: MIN_SIGNAL_SHARE });
  if (solver) {
    const outs = passes.alloc(wanted.length * count), flagBlock = passes.alloc(count);
    const flags = new Int32Array(flagBlock.buffer, flagBlock.byteOffset, 2 * count);
    if (solver.solve(sumBlock, count, rawBlock, outs, flags, minPivot)) {
      for (let at = 0; at < count; at++) {
        if (flags[2 * at] !== 0) { illConditioned++; continue; }
        const i = centres[at];
        for (let w = 0; w < wanted.length; w++) params[w][i] = outs[w * count + at];
      }
      return { params, illConditioned, centres };
    }
  }
  const mat = new Float64Array(n * n);
  const rhs = new Float64Array(n);
  const scale = new Float64Array(n);
  const unit = new Float64Array(n);
  const diag = Array.from({ length: n }, (_, p) => sums[entryIndex(p, p)]);
  const upperMaps: Float64Array[] = [], upperP: number[] = [], upperQ: number[] = [];
  for (let q = 0; q < n; q++) for (let p = 0; p <= q; p++) { upperMaps.push(sums[entryIndex(p, q)]); upperP.push(p); upperQ.push(q); }
  const rhsMaps = Array.from({ length: n }, (_, q) => sums[entryIndex(q, n)]);
  const context: SolveContext = { n, diag, rawDiag, upperMaps, upperP, upperQ, rhsMaps, ridge, wanted, minPivot, mat, rhs, scale, unit };
  for (let at = 0; at < count; at++) {
    const i = centres[at];
    if (!solveCentre(context, at)) { illConditioned++; continue; }
    for (let w = 0; w < wanted.length; w++) params[w][i] = rhs[wanted[w]] * scale[wanted[w]];
  }
  return { params, illConditioned, centres };
}

/**
 * 1 at every pixel that the column window (rows y - r .. y + r of its column) of some centre reads:
 * a count of centres per column slid down the rows (centres ascending, so a row's are consecutive).
 */
function columnWindowsReach(centres: Int32Array, nx: number, ny: number, r: number): Uint8Array {
  const rowStart = new Int32Array(ny + 1);
  for (let k = 0; k < centres.length; k++) rowStart[((centres[k] / nx) | 0) + 1]++;
  for (let y = 0; y < ny; y++) rowStart[y + 1] += rowStart[y];
  const reach = new Uint8Array(nx * ny);
  const inWindow = new Int32Array(nx);
  let total = 0;
  const slide = (y: number, step: 1 | -1) => {
    for (let k = rowStart[y]; k < rowStart[y + 1]; k++) inWindow[centres[k] - y * nx] += step;
    total += step * (rowStart[y + 1] - rowStart[y]);
  };
  for (let y = 0; y < Math.min(r, ny); y++) slide(y, 1);
  for (let y = 0; y < ny; y++) {
    if (y + r < ny) slide(y + r, 1);
    if (y - r - 1 >= 0) slide(y - r - 1, -1);
    if (total === 0) continue;
    for (let x = 0, i = y * nx; x < nx; x++, i++) if (inWindow[x] > 0) reach[i] = 1;
  }
  return reach;
}

/** valid[i] = 0 where c[i] is NaN or infinite (v - v is 0 for finite v only). */
function markInvalid(c: ArrayLike<number>, valid: Uint8Array): void {
  if (c instanceof Float64Array) { markInvalidF64(c, valid); return; }
  for (let i = 0; i < valid.length; i++) if (!Number.isFinite(c[i])) valid[i] = 0;
}

function markInvalidF64(c: Float64Array, valid: Uint8Array): void {
  for (let i = 0; i < valid.length; i++) { const v = c[i]; if (v - v !== 0) valid[i] = 0; }
}

/** What solveCentre reads (the entry sums by centre) and works in. */
interface SolveContext {
  readonly n: number;
  readonly diag: readonly Float64Array[];
  readonly rawDiag: readonly Float64Array[] | undefined;
  readonly upperMaps: readonly Float64Array[];
  readonly upperP: readonly number[];
  readonly upperQ: readonly number[];
  readonly rhsMaps: readonly Float64Array[];
  readonly ridge: readonly number[];
  readonly wanted: readonly number[];
  readonly minPivot: number;
  readonly mat: Float64Array;
  readonly rhs: Float64Array;
  readonly scale: Float64Array;
  readonly unit: Float64Array;
}

/**
 * The scaled normal equations of centre `at` factored and solved: the solution (scaled) in
 * c.rhs and the scales in c.scale; false when the window is ill-conditioned. A function of its own
 * so that it is optimised once (inside the long fit it ran partly unoptimised each frame).
 */
function solveCentre(c: SolveContext, at: number): boolean {
  const { n, diag, rawDiag, upperMaps, upperP, upperQ, rhsMaps, ridge, wanted, minPivot, mat, rhs, scale, unit } = c;
  for (let p = 0; p < n; p++) {
    const d = diag[p][at];
    // A column more than half noise cannot be corrected reliably (the corrected estimator's
    // variance grows without bound as its signal goes to zero): no fit there.
    if (!(d > 0) || (rawDiag !== undefined && !(d >= MIN_SIGNAL_SHARE * rawDiag[p][at]))) return false;
    scale[p] = 1 / Math.sqrt(d);
  }
  for (let k = 0; k < upperMaps.length; k++) {
    const p = upperP[k], q = upperQ[k];
    const v = upperMaps[k][at] * scale[p] * scale[q] + (p === q ? RIDGE + ridge[p] : 0);
    mat[p * n + q] = v;
    mat[q * n + p] = v;
  }
  for (let q = 0; q < n; q++) rhs[q] = -rhsMaps[q][at] * scale[q];
  if (!cholesky(mat, n)) return false;
  // Each wanted parameter must be determined: the part of its (unit) column that the other
  // columns do not explain, 1 / [M^-1]_pp (with the penalties), is at least minPivot.
  for (let w = 0; w < wanted.length; w++) {
    const start = wanted[w];
    unit.fill(0);
    unit[start] = 1;
    forwardSubstitute(mat, unit, n, start);
    let inv = 0;
    for (let k = start; k < n; k++) inv += unit[k] * unit[k];
    if (!(1 / inv >= minPivot)) return false;
  }
  forwardSubstitute(mat, rhs, n);
  backSubstitute(mat, rhs, n);
  return true;
}

/**
 * Added to the unit diagonal of the scaled normal matrix: far below any determined direction's
 * eigenvalue, so it changes no determined parameter, yet it keeps the factorisation finite when a
 * parameter that is not asked for is undetermined.
 */
const RIDGE = 1e-9;

/** Least share of a column's windowed power that must remain after the noise correction. */
const MIN_SIGNAL_SHARE = 0.5;

/** Cholesky factor L (lower triangle of `mat`, in place); false if not positive definite. */
function cholesky(mat: Float64Array, n: number): boolean {
  for (let j = 0; j < n; j++) {
    let d = mat[j * n + j];
    for (let k = 0; k < j; k++) d -= mat[j * n + k] * mat[j * n + k];
    if (!(d > 0)) return false;
    const l = Math.sqrt(d);
    mat[j * n + j] = l;
    for (let i = j + 1; i < n; i++) {
      let s = mat[i * n + j];
      for (let k = 0; k < j; k++) s -= mat[i * n + k] * mat[j * n + k];
      mat[i * n + j] = s / l;
    }
  }
  return true;
}

/** Solves L y = v in place; v[k] = 0 for k < start (so y[k] = 0 there too). */
function forwardSubstitute(mat: Float64Array, v: Float64Array, n: number, start = 0): void {
  for (let i = start; i < n; i++) {
    let s = v[i];
    for (let k = start; k < i; k++) s -= mat[i * n + k] * v[k];
    v[i] = s / mat[i * n + i];
  }
}

/** Solves L^T x = v in place. */
function backSubstitute(mat: Float64Array, v: Float64Array, n: number): void {
  for (let i = n - 1; i >= 0; i--) {
    let s = v[i];
    for (let k = i + 1; k < n; k++) s -= mat[k * n + i] * v[k];
    v[i] = s / mat[i * n + i];
  }
}
