// The kernel (x/r^2, y/r^2) of every helicity-flux integral, transformed once per grid. Both
// components are real and odd on the padded grid, so their spectra are purely imaginary: only the
// imaginary parts are kept. The spectra include the pixel area and the Mm -> cm step, so a
// convolution with them turns a map in G into an integral in G cm. The self pixel is excluded
// (the kernel is 0 at r = 0).

import type { Grid } from './grid.js';
import type { PaddedPlan, PaddedWorkspace, PaddedWorkspaceOptions } from './paddedTransform.js';
import { SPECTRUM_BLOCK, createPaddedPlan, createPaddedWorkspace, createSpectrum, forwardPadded, paddedWorkspaceBytes } from './paddedTransform.js';
import type { SimdArena } from './simdColumns.js';
import { arenaBytes, createSimdArena } from './simdColumns.js';
import { createFftPlan, createRealFftPlan } from './fft.js';
import type { SharedStretch } from './wasmBinary.js';
import { CM_PER_MM } from './units.js';

export interface FluxKernel extends Grid {
  readonly plan: PaddedPlan;
  /**
   * Imaginary parts of the spectra of x/r^2 and y/r^2, times dx dy (Mm^2) times 1e8 cm/Mm, stored
   * as the convolutions read them: by blocks of SPECTRUM_BLOCK frequencies kx, the py rows ky
   * inside a block (frequency (kx, ky) at floor(kx / B) * py * B + ky * B + kx % B), so that a
   * column block's products read one contiguous run.
   */
  readonly kxIm: Float64Array;
  readonly kyIm: Float64Array;
  /**
   * Transform buffers reused by every convolution with this kernel (made at the first one): they
   * belong to whoever owns the kernel, as the kernel cache does, so nothing large is allocated per
   * call. Calls are synchronous, so one kernel serves one caller at a time by construction.
   */
  readonly scratch: { workspace?: PaddedWorkspace };
  /** How the workspace is made (simd: false keeps the TypeScript butterflies; default SIMD where available). */
  readonly workspaceOptions?: PaddedWorkspaceOptions;
  /**
   * The WebAssembly memory (core/simdColumns.ts) holding kxIm, kyIm and, once made, the workspace,
   * so that the SIMD kernels form the spectral products in place; absent without SIMD.
   */
  readonly arena?: SimdArena;
  /**
   * The arena's bytes after the spectra, where the workspace lies. The kernel uses them only inside
   * its own calls, so between calls it lends them to the other workspaces of the thread that owns
   * it (the label split's pair grids, the affine fit): see SharedStretch. Absent without an arena.
   */
  readonly stretch?: SharedStretch;
}

export interface FluxKernelOptions extends PaddedWorkspaceOptions {
  /**
   * Bytes the workspaces that borrow the kernel's stretch need (what the thread's affine fit took
   * last, say): the stretch is made at least this large, and at least the kernel's own workspace.
   */
  readonly scratchBytes?: number;
}

/** Channels of the kernel's workspace: the most any convolution here needs at once. */
const KERNEL_CHANNELS = 3;

/** The kernel's transform buffers (in its arena when it has one). */
export function kernelWorkspace(kernel: FluxKernel): PaddedWorkspace {
  return kernel.scratch.workspace ??= createPaddedWorkspace(kernel.plan, KERNEL_CHANNELS, {
    ...kernel.workspaceOptions, arena: kernel.stretch && kernel.arena?.over(kernel.stretch),
  });
}

/** An explicit, caller-owned cache of kernels by grid (shape and pixel size). */
export type FluxKernelCache = Map<string, FluxKernel>;

/**
 * Padded grids below this many pixels keep the TypeScript transforms unless { simd: true } is asked:
 * making the WebAssembly arena costs 3-12 ms, and a G_theta call on a 64^2 grid (padded 128^2) gains
 * about 0.35 ms from SIMD, on 128^2 (padded 256^2) about 1.7 ms (docs/speed.md).
 */
export const SIMD_MIN_PADDED_PIXELS = 256 * 256;

/**
 * The kernel of `grid`; options.simd: true or false to choose the WebAssembly SIMD kernels or the
 * TypeScript loops (the same numbers), by default SIMD from SIMD_MIN_PADDED_PIXELS on.
 */
export function createFluxKernel(grid: Grid, options: FluxKernelOptions = {}): FluxKernel {
  const { nx, ny, dx, dy } = grid;
  const plan = createPaddedPlan(nx, ny);
  const { px, py } = plan;
  const kx = new Float64Array(px * py);
  const ky = new Float64Array(px * py);
  sampleKernel(0, 0, { from: -(nx - 1), to: nx - 1 }, { from: -(ny - 1), to: ny - 1 }, px, py, dx, dy, kx, ky);
  const sx = createSpectrum(plan);
  const sy = createSpectrum(plan);
  forwardPadded(plan, kx, px, py, sx);
  forwardPadded(plan, ky, px, py, sy);
  const length = Math.ceil(plan.w / SPECTRUM_BLOCK) * SPECTRUM_BLOCK * py;
  const simd = options.simd ?? px * py >= SIMD_MIN_PADDED_PIXELS;
  const stretchBytes = Math.max(paddedWorkspaceBytes(plan, KERNEL_CHANNELS), options.scratchBytes ?? 0);
  // With the tables of every shorter length, for the pair grids that borrow the stretch (core/boxPairSum.ts).
  const arena = simd
    ? createSimdArena(2 * arenaBytes(length) + stretchBytes, [plan.cols, ...plansUpTo(py, createFftPlan)], [plan.rows, ...plansUpTo(px, createRealFftPlan)])
    : undefined;
  const spectrum = () => arena ? arena.alloc(length) : new Float64Array(length);
  const kxIm = byColumnBlocks(sx.im, plan, spectrum()), kyIm = byColumnBlocks(sy.im, plan, spectrum());
  // The workspace's arena is the stretch's (kernelWorkspace): only the choice of kernels carries over.
  return { nx, ny, dx, dy, plan, kxIm, kyIm, scratch: {}, workspaceOptions: { simd }, ...(arena && { arena, stretch: arena.rest() }) };
}

/**
 * The kernel at pixel offsets (ox + i, oy + j), i and j over the given ranges, written at
 * (i mod px, j mod py) of kx and ky (px by py, row-major; other values left as they are): x/r^2
 * and y/r^2 times dx dy (Mm^2) times 1e8 cm/Mm, nothing at r = 0. The whole grid's kernel is the
 * window at offset 0; a pair of boxes takes the window of offsets between them (core/boxPairSum.ts).
 */
export function sampleKernel(
  ox: number, oy: number, is: { from: number; to: number }, js: { from: number; to: number },
  px: number, py: number, dx: number, dy: number, kx: Float64Array, ky: Float64Array,
): void {
  const scale = dx * dy * CM_PER_MM;
  for (let j = js.from; j <= js.to; j++) {
    const iy = oy + j, Y = iy * dy, row = ((j + py) % py) * px;
    for (let i = is.from; i <= is.to; i++) {
      const ix = ox + i;
      if (ix === 0 && iy === 0) continue;
      const X = ix * dx;
      const inv = scale / (X * X + Y * Y);
      const k = row + ((i + px) % px);
      kx[k] = X * inv;
      ky[k] = Y * inv;
    }
  }
}

/** A row-major half spectrum (py rows of w) laid out by blocks of SPECTRUM_BLOCK columns into `out` (zeros beyond w). */
function byColumnBlocks(spectrum: Float64Array, plan: PaddedPlan, out: Float64Array): Float64Array {
  const { w, py } = plan, B = SPECTRUM_BLOCK;
  for (let k0 = 0; k0 < w; k0 += B) {
    const width = Math.min(B, w - k0), base = k0 * py;
    for (let ky = 0; ky < py; ky++) for (let c = 0; c < width; c++) out[base + ky * B + c] = spectrum[ky * w + k0 + c];
  }
  return out;
}

/** Plans of every power of two from 2 to n. */
function plansUpTo<P>(n: number, make: (length: number) => P): P[] {
  const plans: P[] = [];
  for (let m = 2; m <= n; m *= 2) plans.push(make(m));
  return plans;
}

/** A kernel cache's key for `grid` (shape and pixel size). */
export function kernelKey(grid: Grid): string {
  return `${grid.nx}x${grid.ny}@${grid.dx},${grid.dy}`;
}

/**
 * The kernel for `grid`, from `cache` when it holds one, otherwise made (with `options`) and stored
 * there.
 */
export function fluxKernelFor(grid: Grid, cache?: FluxKernelCache, options?: FluxKernelOptions): FluxKernel {
  if (!cache) return createFluxKernel(grid, options);
  const key = kernelKey(grid);
  let k = cache.get(key);
  if (!k) {
    k = createFluxKernel(grid, options);
    cache.set(key, k);
  }
  return k;
}
