// The pair sum of two footpoints, one's field summed over the other's pixels, by transforms over
// their two bounding boxes instead of the whole padded grid: what one entry of a row of the label
// split (core/labelSplit.ts) needs,
//
//   S[b][a] = Sum_{t in b, s in a} Kx(t - s) (Fy(t) Bn(s) - Bn(t) Fy(s)) - Ky(t - s) (Fx(t) Bn(s) - Bn(t) Fx(s))
//
// (K = (x/r^2, y/r^2) times dS Mm->cm as in core/fluxKernel.ts, 0 at r = 0; F = Bn u). With each
// footpoint's maps at the origin of its own box (a at s' = s - A0, b at t' = t - B0), the kernel is
// needed only at offsets t - s = (B0 - A0) + (t' - s'), with t' - s' in [-(wa-1), wb-1] x
// [-(ha-1), hb-1]: a window of the kernel, placed circularly on a grid of Px >= wa + wb - 1 by
// Py >= ha + hb - 1, where the offsets do not alias. The sum over target pixels of a circular
// convolution is then, by Parseval, a sum over the spectra (real maps: half spectra, the columns
// inside the half counted twice), with no inverse transform:
//
//   S = (1/N) Sum_w Re[ KX (conj(FYb) Ba - conj(Bb) FYa) - KY (conj(FXb) Ba - conj(Bb) FXa) ].
//
// Two footpoints 70 pixels across take transforms of 256^2 instead of the 1024^2 of a 512^2
// frame. The sum is the same as the whole-grid row's to rounding (test/core/boxPairSum.test.ts).
//
//   const { px, py } = pairGridSize(boxA, boxB), g = pairGrid(createPairGrids(px, py), px, py)
//   boxPairSum(boxA, boxSpectra(mapsA, boxA, g), boxB, boxSpectra(mapsB, boxB, g), g, dx, dy)

import type { PaddedPlan, PaddedWorkspace } from './paddedTransform.js';
import { SPECTRUM_BLOCK, createPaddedWorkspace, forwardByBlocks, paddedWorkspaceBytes } from './paddedTransform.js';
import type { FftPlan, RealFftPlan } from './fft.js';
import { createFftPlan, createRealFftPlan, nextPowerOfTwo } from './fft.js';
import { arenaBytes, createSimdArena } from './simdColumns.js';
import type { FluxKernel } from './fluxKernel.js';
import { sampleKernel } from './fluxKernel.js';
import type { SharedStretch } from './wasmBinary.js';
import type { PairColumnsKernel } from './pairSpectralColumns.js';
import { PAIR_COLUMNS_KEY, pairColumnsModule } from './pairSpectralColumns.js';

/** A footpoint's bounding box on the frame grid, pixels: columns x0 .. x0+w-1, rows y0 .. y0+h-1. */
export interface PixelBox {
  readonly x0: number;
  readonly y0: number;
  readonly w: number;
  readonly h: number;
}

/** A footpoint's Bn, Fx and Fy on its box (row-major w*h, zero off its pixels). */
export interface BoxMaps {
  readonly bn: Float64Array;
  readonly fx: Float64Array;
  readonly fy: Float64Array;
}

/**
 * The half spectra of a footpoint's three maps on one pair grid, by blocks of SPECTRUM_BLOCK
 * frequencies kx with the py rows ky inside a block: (kx, ky) at floor(kx / B) py B + ky B + kx % B.
 */
export interface BoxSpectra {
  readonly re: readonly [Float64Array, Float64Array, Float64Array];
  readonly im: readonly [Float64Array, Float64Array, Float64Array];
}

/**
 * Transform grids for pair sums up to maxPx by maxPy sharing one workspace, whose arena holds the
 * tables of every smaller power of two: a smaller grid uses the front of the same buffers. Kept by
 * the caller from frame to frame (making the arena costs more than the transforms it serves), and
 * made anew, larger, when a pair needs more.
 */
export interface PairGrids {
  readonly maxPx: number;
  readonly maxPy: number;
  readonly work: PaddedWorkspace;
  readonly rows: ReadonlyMap<number, RealFftPlan>;
  readonly cols: ReadonlyMap<number, FftPlan>;
  /** Kernel windows, reused (the first px*py values serve a px by py grid). */
  readonly kx: Float64Array;
  readonly ky: Float64Array;
  /**
   * With SIMD: the spectral loop's kernel (core/pairSpectralColumns.ts) bound to the workspace's
   * memory, its column sums, and the memory after the grids' buffers, where spectra may be made
   * (spectraSpace) so that the kernel can read them.
   */
  readonly simdSums?: SimdPairSums;
}

interface SimdPairSums {
  readonly run: PairColumnsKernel;
  readonly columns: Float64Array;
  readonly room: SharedStretch;
}

/** One grid of a PairGrids: its plan (maps up to the whole grid) over the shared buffers. */
export interface PairGrid {
  readonly plan: PaddedPlan;
  readonly work: PaddedWorkspace;
  readonly kx: Float64Array;
  readonly ky: Float64Array;
  readonly simdSums?: SimdPairSums;
}

/** Where boxSpectra makes a footpoint's spectra: arrays from `alloc`, or undefined when it has no room. */
export interface SpectraSpace {
  alloc(length: number): Float64Array | undefined;
}

/** The transform grid for the pair sums of two boxes (powers of two, at least 2 per side). */
export function pairGridSize(a: PixelBox, b: PixelBox): { px: number; py: number } {
  return { px: Math.max(2, nextPowerOfTwo(a.w + b.w - 1)), py: Math.max(2, nextPowerOfTwo(a.h + b.h - 1)) };
}

/**
 * Pair grids up to maxPx by maxPy (powers of two >= 2); simd: false keeps the TypeScript butterflies
 * (the same numbers). With `kernel` (a flux kernel of the same thread, whose padded grid is at
 * least as large), the buffers lie in the kernel's stretch when they fit there: the pair sums run
 * between the kernel's convolutions, never inside one.
 */
export function createPairGrids(maxPx: number, maxPy: number, options: { simd?: boolean; kernel?: FluxKernel } = {}): PairGrids {
  const powerOfTwo = (n: number) => n >= 2 && nextPowerOfTwo(n) === n;
  if (!powerOfTwo(maxPx) || !powerOfTwo(maxPy)) throw new RangeError(`pair grids up to ${maxPx}x${maxPy}: sides must be powers of two >= 2`);
  const rows = new Map<number, RealFftPlan>(), cols = new Map<number, FftPlan>();
  for (let n = 2; n <= maxPx; n *= 2) rows.set(n, createRealFftPlan(n));
  for (let n = 2; n <= maxPy; n *= 2) cols.set(n, createFftPlan(n));
  const largest = gridPlan(maxPx, maxPy, rows, cols);
  const bytes = paddedWorkspaceBytes(largest, 3) + 2 * arenaBytes(maxPx * maxPy);
  const { kernel } = options, stretch = kernel?.stretch;
  const lent = kernel?.arena && stretch && stretch.end - stretch.start >= bytes && maxPx <= kernel.plan.px && maxPy <= kernel.plan.py
    ? kernel.arena.over(stretch) : undefined;
  const arena = options.simd === false ? undefined : lent ?? createSimdArena(bytes, [...cols.values()], [...rows.values()]);
  const work = createPaddedWorkspace(largest, 3, arena ? { arena } : { simd: false });
  const window = () => (arena ? arena.alloc(maxPx * maxPy) : new Float64Array(maxPx * maxPy));
  const kx = window(), ky = window();
  const columns = arena?.alloc(SPECTRUM_BLOCK), room = arena?.rest();
  const run = room?.instantiate(PAIR_COLUMNS_KEY, pairColumnsModule)?.pairColumns as PairColumnsKernel | undefined;
  return { maxPx, maxPy, work, rows, cols, kx, ky, ...(run && columns && room && { simdSums: { run, columns, room } }) };
}

/**
 * A space for the spectra of one grid size's footpoints, in the grids' memory after their buffers
 * (so that the SIMD kernel reads them), empty when there is none. Each call starts the space anew:
 * spectra made from an earlier one are overwritten, and the grids' own convolutions (and those of
 * the kernel whose stretch they may lie on) overwrite them too, so they live only between such calls.
 */
export function spectraSpace(grids: PairGrids): SpectraSpace {
  const room = grids.simdSums?.room;
  let next = room?.start ?? 0;
  return {
    alloc(length) {
      const bytes = arenaBytes(length);
      if (!room || next + bytes > room.end) return undefined;
      const a = new Float64Array(room.buffer, next, length);
      next += bytes;
      return a;
    },
  };
}

/** The px by py grid of `grids` (within its largest). */
export function pairGrid(grids: PairGrids, px: number, py: number): PairGrid {
  if (!(px <= grids.maxPx && py <= grids.maxPy && grids.rows.has(px) && grids.cols.has(py))) {
    throw new RangeError(`pair grid ${px}x${py}: not among the grids up to ${grids.maxPx}x${grids.maxPy}`);
  }
  return {
    plan: gridPlan(px, py, grids.rows, grids.cols), work: grids.work, kx: grids.kx, ky: grids.ky,
    ...(grids.simdSums && { simdSums: grids.simdSums }),
  };
}

/** A plan whose maps fill the whole px by py grid (no padding of its own). */
function gridPlan(px: number, py: number, rows: ReadonlyMap<number, RealFftPlan>, cols: ReadonlyMap<number, FftPlan>): PaddedPlan {
  return { nx: px, ny: py, px, py, w: px / 2 + 1, rows: rows.get(px)!, cols: cols.get(py)! };
}

/**
 * The spectra of a footpoint's maps (its box's w by h at the grid's origin) on a pair grid; in
 * `space` when it has room for all six arrays (see spectraSpace for how long they last there).
 */
export function boxSpectra(maps: BoxMaps, box: PixelBox, grid: PairGrid, space?: SpectraSpace): BoxSpectra {
  const { plan } = grid, B = SPECTRUM_BLOCK, size = Math.ceil(plan.w / B) * B * plan.py;
  const inSpace = space && Array.from({ length: 6 }, () => space.alloc(size));
  const made = inSpace?.every((a) => a !== undefined) ? (inSpace as Float64Array[]) : Array.from({ length: 6 }, () => new Float64Array(size));
  const re = [made[0], made[1], made[2]] as const, im = [made[3], made[4], made[5]] as const;
  const at = (m: Float64Array) => ({ map: m, nx: box.w, ny: box.h });
  forwardByBlocks(plan, grid.work, [at(maps.bn), at(maps.fx), at(maps.fy)], (inRe, inIm, c0) => {
    const o = c0 * plan.py, len = plan.py * B;
    for (let j = 0; j < 3; j++) { re[j].set(inRe[j].subarray(0, len), o); im[j].set(inIm[j].subarray(0, len), o); }
  });
  return { re, im };
}

/**
 * S[b][a], the field of footpoint a summed over footpoint b's pixels (the bracket of the label
 * split before its physical factors), from their spectra on `grid` (at least pairGridSize(a, b));
 * dx, dy the pixel size, Mm.
 */
export function boxPairSum(a: PixelBox, sa: BoxSpectra, b: PixelBox, sb: BoxSpectra, grid: PairGrid, dx: number, dy: number): number {
  const { plan, kx, ky } = grid, { px, py } = plan;
  if (px < a.w + b.w - 1 || py < a.h + b.h - 1) throw new RangeError(`pair grid ${px}x${py} too small for boxes ${a.w}x${a.h} and ${b.w}x${b.h}`);
  // The kernel at offsets t - s = (B0 - A0) + (t' - s'), placed circularly; zero elsewhere.
  kx.fill(0, 0, px * py); ky.fill(0, 0, px * py);
  sampleKernel(b.x0 - a.x0, b.y0 - a.y0, { from: -(a.w - 1), to: b.w - 1 }, { from: -(a.h - 1), to: b.h - 1 }, px, py, dx, dy, kx, ky);
  let s = 0;
  const simd = grid.simdSums;
  const bySimd = simd !== undefined && [...sa.re, ...sa.im, ...sb.re, ...sb.im, grid.work.inRe[0]].every((a) => a.buffer === simd.room.buffer);
  forwardByBlocks(plan, grid.work, [{ map: kx, nx: px, ny: py }, { map: ky, nx: px, ny: py }], (inRe, inIm, c0, width) => {
    s += bySimd
      ? simdPairSum(simd, inRe[0], inIm[0], inRe[1], inIm[1], sa, sb, c0 * py, c0, width, px, py)
      : spectralPairSum(inRe[0], inIm[0], inRe[1], inIm[1], sa, sb, c0 * py, c0, width, px, py);
  });
  return s / (px * py);
}

/** spectralPairSum by the SIMD kernel (every array in its memory): the same column sums, added in the same order. */
function simdPairSum(
  simd: SimdPairSums, kxr: Float64Array, kxi: Float64Array, kyr: Float64Array, kyi: Float64Array, a: BoxSpectra, b: BoxSpectra,
  o: number, c0: number, width: number, px: number, py: number,
): number {
  const at = (m: Float64Array) => m.byteOffset + 8 * o;
  simd.run(kxr.byteOffset, kxi.byteOffset, kyr.byteOffset, kyi.byteOffset,
    at(a.re[0]), at(a.im[0]), at(a.re[1]), at(a.im[1]), at(a.re[2]), at(a.im[2]),
    at(b.re[0]), at(b.im[0]), at(b.re[1]), at(b.im[1]), at(b.re[2]), at(b.im[2]),
    Math.ceil(width / 2), py, 8 * SPECTRUM_BLOCK, simd.columns.byteOffset);
  const last = px / 2, col = simd.columns;
  let s = 0;
  for (let c = 0; c < width; c++) s += (c0 + c === 0 || c0 + c === last ? 1 : 2) * col[c];
  return s;
}

/**
 * One column block's share (columns c0 .. c0+width, py rows of SPECTRUM_BLOCK; the spectra's block
 * at `o`) of the sum over the half spectrum, columns 1 .. px/2-1 counted twice, of the real part of
 * KX (conj(FYb) Ba - conj(Bb) FYa) - KY (conj(FXb) Ba - conj(Bb) FXa).
 */
function spectralPairSum(
  kxr: Float64Array, kxi: Float64Array, kyr: Float64Array, kyi: Float64Array, a: BoxSpectra, b: BoxSpectra,
  o: number, c0: number, width: number, px: number, py: number,
): number {
  const B = SPECTRUM_BLOCK, last = px / 2;
  const bar = a.re[0], bai = a.im[0], xar = a.re[1], xai = a.im[1], yar = a.re[2], yai = a.im[2];
  const bbr = b.re[0], bbi = b.im[0], xbr = b.re[1], xbi = b.im[1], ybr = b.re[2], ybi = b.im[2];
  let s = 0;
  for (let c = 0; c < width; c++) {
    const weight = c0 + c === 0 || c0 + c === last ? 1 : 2;
    let col = 0;
    for (let ky0 = 0, k = c, i = o + c; ky0 < py; ky0++, k += B, i += B) {
      // u = conj(FYb) Ba - conj(Bb) FYa, v = conj(FXb) Ba - conj(Bb) FXa.
      const ur = ybr[i] * bar[i] + ybi[i] * bai[i] - (bbr[i] * yar[i] + bbi[i] * yai[i]);
      const ui = ybr[i] * bai[i] - ybi[i] * bar[i] - (bbr[i] * yai[i] - bbi[i] * yar[i]);
      const vr = xbr[i] * bar[i] + xbi[i] * bai[i] - (bbr[i] * xar[i] + bbi[i] * xai[i]);
      const vi = xbr[i] * bai[i] - xbi[i] * bar[i] - (bbr[i] * xai[i] - bbi[i] * xar[i]);
      col += kxr[k] * ur - kxi[k] * ui - (kyr[k] * vr - kyi[k] * vi);
    }
    s += weight * col;
  }
  return s;
}
