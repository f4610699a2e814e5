// The kernel (x/r^2, y/r^2) of every helicity-flux integral, transformed once per grid. Both
// components are real and odd on the padded grid, so their spectra are purely imaginary: only the
// imaginary parts are kept. The spectra include the pixel area and the Mm -> cm step, so a
// convolution with them turns a map in G into an integral in G cm. The self pixel is excluded
// (the kernel is 0 at r = 0).

import type { Grid } from './grid.js';
import type { PaddedPlan, PaddedWorkspace, PaddedWorkspaceOptions } from './paddedTransform.js';
import { SPECTRUM_BLOCK, createPaddedPlan, createPaddedWorkspace, createSpectrum, forwardPadded } from './paddedTransform.js';
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
}

/** The kernel's transform buffers (three maps: the most any convolution here needs at once). */
export function kernelWorkspace(kernel: FluxKernel): PaddedWorkspace {
  return kernel.scratch.workspace ??= createPaddedWorkspace(kernel.plan, 3, kernel.workspaceOptions);
}

/** An explicit, caller-owned cache of kernels by grid (shape and pixel size). */
export type FluxKernelCache = Map<string, FluxKernel>;

export function createFluxKernel(grid: Grid, options: PaddedWorkspaceOptions = {}): FluxKernel {
  const { nx, ny, dx, dy } = grid;
  const plan = createPaddedPlan(nx, ny);
  const { px, py } = plan;
  const scale = dx * dy * CM_PER_MM;
  const kx = new Float64Array(px * py);
  const ky = new Float64Array(px * py);
  for (let iy = -(ny - 1); iy <= ny - 1; iy++) {
    const Y = iy * dy;
    const row = ((iy + py) % py) * px;
    for (let ix = -(nx - 1); ix <= nx - 1; ix++) {
      if (ix === 0 && iy === 0) continue;
      const X = ix * dx;
      const inv = scale / (X * X + Y * Y);
      const k = row + ((ix + px) % px);
      kx[k] = X * inv;
      ky[k] = Y * inv;
    }
  }
  const sx = createSpectrum(plan);
  const sy = createSpectrum(plan);
  forwardPadded(plan, kx, px, py, sx);
  forwardPadded(plan, ky, px, py, sy);
  return { nx, ny, dx, dy, plan, kxIm: byColumnBlocks(sx.im, plan), kyIm: byColumnBlocks(sy.im, plan), scratch: {}, workspaceOptions: options };
}

/** A row-major half spectrum (py rows of w) laid out by blocks of SPECTRUM_BLOCK columns. */
function byColumnBlocks(spectrum: Float64Array, plan: PaddedPlan): Float64Array {
  const { w, py } = plan, B = SPECTRUM_BLOCK;
  const out = new Float64Array(Math.ceil(w / B) * B * py);
  for (let ky = 0; ky < py; ky++) for (let kx = 0; kx < w; kx++) out[Math.floor(kx / B) * py * B + ky * B + (kx % B)] = spectrum[ky * w + kx];
  return out;
}

/**
 * The kernel for `grid`, from `cache` when it holds one, otherwise made (with `options`) and stored
 * there.
 */
export function fluxKernelFor(grid: Grid, cache?: FluxKernelCache, options?: PaddedWorkspaceOptions): FluxKernel {
  if (!cache) return createFluxKernel(grid, options);
  const key = `${grid.nx}x${grid.ny}@${grid.dx},${grid.dy}`;
  let k = cache.get(key);
  if (!k) {
    k = createFluxKernel(grid, options);
    cache.set(key, k);
  }
  return k;
}
