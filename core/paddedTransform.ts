// Zero-padded 2-D real FFTs for linear (not circular) convolution of an nx*ny map with a kernel
// spanning -(n-1)..(n-1): the padded sizes are powers of two >= 2n-1. Spectra are kept as the
// half spectrum (px/2+1 columns by py rows), split into re and im. Rows that are zero on input
// are never transformed, and only the nx*ny block is computed on the way back.

import type { FftPlan, RealFftPlan } from './fft.js';
import { createFftPlan, createRealFftPlan, fftColumns, nextPowerOfTwo, realFftRow, realInverseFftRow } from './fft.js';

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
