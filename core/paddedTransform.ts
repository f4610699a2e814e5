// Zero-padded 2-D real FFTs for linear (not circular) convolution of an nx*ny map with a kernel
// spanning -(n-1)..(n-1): the padded sizes are powers of two >= 2n-1. Spectra are kept as the
// half spectrum (px/2+1 columns by py rows), split into re and im. Rows that are zero on input
// are never transformed, and only the nx*ny block is computed on the way back.

import type { FftPlan, RealFftPlan, RowBlock } from './fft.js';
import {
  columnBlockBitReversed, createFftPlan, createRealFftPlan, createRowBlock, fftColumns, nextPowerOfTwo, realFftRow,
  realFftRows, realInverseFftRow, realInverseFftRows, rowBlockLength,
} from './fft.js';
import type { SimdArena } from './simdColumns.js';
import { arenaBytes, createSimdArena } from './simdColumns.js';

export interface PaddedPlan {
  readonly nx: number;
  readonly ny: number;
  /** Padded width and height. */
  readonly px: number;
  readonly py: number;
  /** Half-spectrum width px/2 + 1. */
  readonly w: number;
  readonly rows: RealFftPlan;
  readonly cols: FftPlan;
}

export interface Spectrum {
  readonly re: Float64Array;
  readonly im: Float64Array;
}

export function createPaddedPlan(nx: number, ny: number): PaddedPlan {
  const px = Math.max(2, nextPowerOfTwo(2 * nx - 1));
  const py = nextPowerOfTwo(2 * ny - 1);
  return { nx, ny, px, py, w: px / 2 + 1, rows: createRealFftPlan(px), cols: createFftPlan(py) };
}

export function createSpectrum(plan: PaddedPlan): Spectrum {
  const size = plan.w * plan.py;
  return { re: new Float64Array(size), im: new Float64Array(size) };
}

/**
 * Forward transform of a row-major block `input` of inNx columns by inNy rows, placed at the
 * origin of the padded grid (zeros elsewhere), into `out`.
 */
export function forwardPadded(
  plan: PaddedPlan, input: ArrayLike<number>, inNx: number, inNy: number, out: Spectrum,
): void {
  const { w, rows, cols } = plan;
  for (let r = 0; r < inNy; r++) realFftRow(rows, input, r * inNx, inNx, out.re, out.im, r * w);
  out.re.fill(0, inNy * w);
  out.im.fill(0, inNy * w);
  fftColumns(cols, out.re, out.im, w, -1, inNy);
}

/** Inverse transform of `spec` (destroyed); writes the nx*ny block at the origin into `out`. */
export function inversePadded(plan: PaddedPlan, spec: Spectrum, out: Float64Array): void {
  const { nx, ny, w, py, rows, cols } = plan;
  fftColumns(cols, spec.re, spec.im, w, 1);
  for (let r = 0; r < ny; r++) realInverseFftRow(rows, spec.re, spec.im, r * w, out, r * nx, nx, 1 / py);
}

/**
 * Zeros one row of a half spectrum stored by column blocks: B values at first, first + stride, ...
 * A loop rather than a fill() per block: for sparse inputs (one footpoint's pixels) most rows are
 * zero, and some 30 builtin calls per row per map made a tenth of a convolution's time.
 */
function zeroBlockRow(re: Float64Array, im: Float64Array, first: number, stride: number, B: number, end: number): void {
  for (let b = first; b < end; b += stride) {
    for (let c = b; c < b + B; c++) { re[c] = 0; im[c] = 0; }
  }
}

/** Columns of the half spectrum that convolvePadded carries through both column passes together. */
export const SPECTRUM_BLOCK = 16;

/**
 * Buffers for convolvePadded, reused from call to call by whoever owns them (a kernel keeps one:
 * core/fluxKernel.ts). Only the ny rows an input fills are kept per map (half the padded spectrum),
 * and the column passes run on blocks of SPECTRUM_BLOCK columns that stay in cache.
 */
export interface PaddedWorkspace {
  readonly channels: number;
  /**
   * Half spectra per map, ny rows of w, stored by blocks of SPECTRUM_BLOCK frequencies (rows inside
   * a block, so that a column block is one contiguous run): the inputs' after the row pass, the
   * outputs' before theirs.
   */
  readonly rowRe: Float64Array[];
  readonly rowIm: Float64Array[];
  /** Column blocks, py rows of SPECTRUM_BLOCK: the inputs' and the outputs'. */
  readonly inRe: Float64Array[];
  readonly inIm: Float64Array[];
  readonly outRe: Float64Array[];
  readonly outIm: Float64Array[];
  readonly rowBlock: RowBlock;
  /** The WebAssembly memory all the buffers above lie in, whose SIMD kernel runs the butterflies. */
  readonly simd?: SimdArena;
}

export interface PaddedWorkspaceOptions {
  /**
   * Run the column butterflies by the WebAssembly SIMD kernel (core/simdColumns.ts; the same
   * numbers, bit for bit). Default true; where WebAssembly SIMD is unavailable, or the memory
   * cannot be had, the buffers are plain arrays and the TypeScript loops run.
   */
  readonly simd?: boolean;
  /**
   * The arena to allocate the buffers in (made with room for paddedWorkspaceBytes and the tables of
   * plan.cols and plan.rows); otherwise the workspace makes its own.
   */
  readonly arena?: SimdArena;
}

/** Bytes the buffers of a workspace take in a SIMD arena. */
export function paddedWorkspaceBytes(plan: PaddedPlan, channels: number): number {
  const rowSize = Math.ceil(plan.w / SPECTRUM_BLOCK) * SPECTRUM_BLOCK * plan.ny, blockSize = plan.py * SPECTRUM_BLOCK;
  return channels * (2 * arenaBytes(rowSize) + 4 * arenaBytes(blockSize)) + 2 * arenaBytes(rowBlockLength(plan.rows));
}

export function createPaddedWorkspace(plan: PaddedPlan, channels: number, options: PaddedWorkspaceOptions = {}): PaddedWorkspace {
  const rowSize = Math.ceil(plan.w / SPECTRUM_BLOCK) * SPECTRUM_BLOCK * plan.ny, blockSize = plan.py * SPECTRUM_BLOCK;
  const simd = options.simd === false ? undefined
    : options.arena ?? createSimdArena(paddedWorkspaceBytes(plan, channels), [plan.cols], [plan.rows]);
  const maps = (size: number) => Array.from({ length: channels }, () => simd ? simd.alloc(size) : new Float64Array(size));
  return {
    channels, rowRe: maps(rowSize), rowIm: maps(rowSize),
    inRe: maps(blockSize), inIm: maps(blockSize), outRe: maps(blockSize), outIm: maps(blockSize),
    rowBlock: createRowBlock(plan.rows, simd), simd,
  };
}

/**
 * Forms the outputs' spectra from the inputs' for columns c0 .. c0+width of the half spectrum.
 * inRe/inIm[j][ky*SPECTRUM_BLOCK + c] hold input j at frequency (c0 + c, ky); output j's value at
 * (c0 + c, ky) goes to outRe/outIm[j][rev[ky]*SPECTRUM_BLOCK + c] (bit-reversed rows, the order
 * the inverse column pass reads).
 */
export type SpectralStep = (
  inRe: readonly Float64Array[], inIm: readonly Float64Array[], outRe: readonly Float64Array[], outIm: readonly Float64Array[],
  c0: number, width: number, rev: Uint32Array,
) => void;

/**
 * The row pass of input j (an nx by ny map at the padded grid's origin) into the workspace's
 * rowRe/rowIm[j], stored by blocks of SPECTRUM_BLOCK frequencies with ny rows inside a block:
 * runs of rows holding some non-zero value go through the transform; zero rows give zero.
 */
function forwardRows(plan: PaddedPlan, work: PaddedWorkspace, j: number, x: ArrayLike<number>, nx: number, ny: number): void {
  const B = SPECTRUM_BLOCK, stride = ny * B;
  const zeroRow = (y: number) => { for (let i = y * nx, e = i + nx; i < e; i++) if (x[i] !== 0) return false; return true; };
  for (let y = 0; y < ny;) {
    if (zeroRow(y)) {
      zeroBlockRow(work.rowRe[j], work.rowIm[j], y * B, stride, B, Math.ceil(plan.w / B) * stride);
      y++;
      continue;
    }
    let end = y + 1;
    while (end < ny && !zeroRow(end)) end++;
    realFftRows(plan.rows, x, y * nx, nx, nx, end - y, work.rowRe[j], work.rowIm[j], y * B, stride, work.rowBlock, B);
    y = end;
  }
}

/**
 * The column pass of input j for the half-spectrum columns c0 .. c0+bw (ny rows filled by
 * forwardRows, the rest of the padded rows zero) into inRe/inIm[j]: py rows of SPECTRUM_BLOCK,
 * natural order.
 */
function forwardColumnBlock(plan: PaddedPlan, work: PaddedWorkspace, j: number, ny: number, c0: number, bw: number): void {
  const { py, cols } = plan, B = SPECTRUM_BLOCK, stride = ny * B, rev = cols.rev;
  const sr = work.rowRe[j], si = work.rowIm[j], br = work.inRe[j], bi = work.inIm[j];
  if (work.simd?.packAndTransform(cols, sr, si, (c0 / B) * stride, ny, br, bi, B, bw, -1)) return;
  const upperZero = py >= 2 && 2 * ny <= py;
  const zeroEnd = upperZero ? py >> 1 : py;
  for (let y = 0, s = (c0 / B) * stride; y < ny; y++, s += B) {
    const t = rev[y] * B;
    for (let c = 0; c < bw; c++) { br[t + c] = sr[s + c]; bi[t + c] = si[s + c]; }
  }
  for (let y = ny; y < zeroEnd; y++) {
    const t = rev[y] * B;
    br.fill(0, t, t + bw); bi.fill(0, t, t + bw);
  }
  columnBlockBitReversed(work.simd, cols, br, bi, B, bw, -1, upperZero);
}

/**
 * Forward transforms of maps of any size up to the padded grid (each at its origin, zeros
 * elsewhere; the workspace's plan.ny at least the tallest), handed to `visit` one block of
 * SPECTRUM_BLOCK half-spectrum columns at a time: inRe/inIm[j][ky*SPECTRUM_BLOCK + c] is map j at
 * frequency (c0 + c, ky), natural order. The forward half of convolvePadded, with its kernels.
 */
export function forwardByBlocks(
  plan: PaddedPlan, work: PaddedWorkspace, maps: readonly { readonly map: ArrayLike<number>; readonly nx: number; readonly ny: number }[],
  visit: (inRe: readonly Float64Array[], inIm: readonly Float64Array[], c0: number, width: number) => void,
): void {
  if (maps.length > work.channels) throw new RangeError('workspace has too few channels');
  for (const [j, m] of maps.entries()) {
    if (m.nx > plan.px || m.ny > plan.ny) throw new RangeError(`map ${m.nx}x${m.ny} larger than the workspace's ${plan.px}x${plan.ny}`);
    forwardRows(plan, work, j, m.map, m.nx, m.ny);
  }
  for (let c0 = 0; c0 < plan.w; c0 += SPECTRUM_BLOCK) {
    const bw = Math.min(SPECTRUM_BLOCK, plan.w - c0);
    for (let j = 0; j < maps.length; j++) forwardColumnBlock(plan, work, j, maps[j].ny, c0, bw);
    visit(work.inRe, work.inIm, c0, bw);
  }
}

/**
 * Linear convolutions through the padded transforms in one go: the forward transforms of `inputs`
 * (nx*ny maps), `step` forming the outputs' spectra, and the inverse transforms, whose nx*ny blocks
 * go to `outputs` (the same as forwardPadded, a product, inversePadded per output, to rounding).
 * The column passes, forward and inverse, run block by block of columns while the block is in
 * cache; rows that are zero (padding, or input rows that hold only zeros) are never transformed;
 * nothing is allocated (`work` is reused). With `outputRows`, only the output rows y where
 * outputRows[y] is non-zero are computed; the others are set to 0.
 */
export function convolvePadded(
  plan: PaddedPlan, work: PaddedWorkspace, inputs: readonly ArrayLike<number>[], outputs: readonly Float64Array[], step: SpectralStep,
  outputRows?: Uint8Array,
): void {
  const { nx, ny, w, py, rows, cols } = plan;
  if (inputs.length > work.channels || outputs.length > work.channels) throw new RangeError('workspace has too few channels');
  const B = SPECTRUM_BLOCK;
  const { rowRe, rowIm, inRe, inIm, outRe, outIm, rowBlock } = work;
  const stride = ny * B; // one block of B frequencies: ny rows of B
  for (let j = 0; j < inputs.length; j++) forwardRows(plan, work, j, inputs[j], nx, ny);
  const rev = cols.rev;
  for (let c0 = 0; c0 < w; c0 += B) {
    const bw = Math.min(B, w - c0);
    for (let j = 0; j < inputs.length; j++) forwardColumnBlock(plan, work, j, ny, c0, bw);
    step(inRe, inIm, outRe, outIm, c0, bw, rev);
    for (let j = 0; j < outputs.length; j++) {
      const br = outRe[j], bi = outIm[j], sr = rowRe[j], si = rowIm[j];
      columnBlockBitReversed(work.simd, cols, br, bi, B, bw, 1, false);
      // Rows 0..ny-1 of the block, in natural order after the pass: one contiguous copy.
      sr.set(br.subarray(0, stride), (c0 / B) * stride);
      si.set(bi.subarray(0, stride), (c0 / B) * stride);
    }
  }
  for (let j = 0; j < outputs.length; j++) {
    if (!outputRows) { realInverseFftRows(rows, rowRe[j], rowIm[j], 0, stride, ny, outputs[j], 0, nx, nx, 1 / py, rowBlock, B); continue; }
    for (let y = 0; y < ny;) {
      if (outputRows[y] === 0) { outputs[j].fill(0, y * nx, y * nx + nx); y++; continue; }
      let end = y + 1;
      while (end < ny && outputRows[end] !== 0) end++;
      realInverseFftRows(rows, rowRe[j], rowIm[j], y * B, stride, end - y, outputs[j], y * nx, nx, nx, 1 / py, rowBlock, B);
      y = end;
    }
  }
}
