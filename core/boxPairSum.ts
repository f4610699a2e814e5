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
//   const a = boxSpectra(boxMapsOf(...), plan), b = boxSpectra(..., plan)
//   boxPairSum(boxA, a, boxB, b, plan, dx, dy)

import type { PaddedPlan, Spectrum } from './paddedTransform.js';
import { createSpectrum, forwardPadded } from './paddedTransform.js';
import { createFftPlan, createRealFftPlan, nextPowerOfTwo } from './fft.js';
import { CM_PER_MM } from './units.js';

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

/** The half spectra of a footpoint's three maps on one transform grid. */
export interface BoxSpectra {
  readonly bn: Spectrum;
  readonly fx: Spectrum;
  readonly fy: Spectrum;
}

/** The transform grid for the pair sums of two boxes (powers of two, at least 2 per side). */
export function pairGridSize(a: PixelBox, b: PixelBox): { px: number; py: number } {
  return { px: Math.max(2, nextPowerOfTwo(a.w + b.w - 1)), py: Math.max(2, nextPowerOfTwo(a.h + b.h - 1)) };
}

/** A plan whose padded grid is px by py (both powers of two >= 2). */
export function pairPlan(px: number, py: number): PaddedPlan {
  if (!(px >= 2 && py >= 2 && nextPowerOfTwo(px) === px && nextPowerOfTwo(py) === py)) throw new RangeError(`pair grid ${px}x${py}: sides must be powers of two >= 2`);
  // Maps up to half the grid fit it as a padded plan's block would; forwardPadded takes up to px by py.
  return { nx: px / 2, ny: py / 2, px, py, w: px / 2 + 1, rows: createRealFftPlan(px), cols: createFftPlan(py) };
}

/** The spectra of a footpoint's maps (w by h at the grid's origin) on `plan`'s grid. */
export function boxSpectra(maps: BoxMaps, box: PixelBox, plan: PaddedPlan): BoxSpectra {
  const one = (m: Float64Array) => { const s = createSpectrum(plan); forwardPadded(plan, m, box.w, box.h, s); return s; };
  return { bn: one(maps.bn), fx: one(maps.fx), fy: one(maps.fy) };
}

/**
 * S[b][a], the field of footpoint a summed over footpoint b's pixels (the bracket of the label
 * split before its physical factors), from their spectra on `plan` (its grid at least
 * pairGridSize(a, b)); dx, dy the pixel size, Mm.
 */
export function boxPairSum(a: PixelBox, sa: BoxSpectra, b: PixelBox, sb: BoxSpectra, plan: PaddedPlan, dx: number, dy: number): number {
  const { px, py } = plan;
  if (px < a.w + b.w - 1 || py < a.h + b.h - 1) throw new RangeError(`pair grid ${px}x${py} too small for boxes ${a.w}x${a.h} and ${b.w}x${b.h}`);
  const kx = new Float64Array(px * py), ky = new Float64Array(px * py);
  kernelWindow(b.x0 - a.x0, b.y0 - a.y0, a, b, px, py, dx, dy, kx, ky);
  const skx = createSpectrum(plan), sky = createSpectrum(plan);
  forwardPadded(plan, kx, px, py, skx);
  forwardPadded(plan, ky, px, py, sky);
  return spectralPairSum(skx, sky, sa, sb, plan.w, px, py) / (px * py);
}

/**
 * The kernel at offsets (ox, oy) + (i, j), i in [-(a.w-1), b.w-1], j in [-(a.h-1), b.h-1], placed
 * at (i mod px, j mod py): x/r^2 and y/r^2 times dx dy (Mm^2) times 1e8 cm/Mm, as the whole-grid
 * kernel (core/fluxKernel.ts), 0 at r = 0.
 */
function kernelWindow(
  ox: number, oy: number, a: PixelBox, b: PixelBox, px: number, py: number, dx: number, dy: number, kx: Float64Array, ky: Float64Array,
): void {
  const scale = dx * dy * CM_PER_MM;
  for (let j = -(a.h - 1); j <= b.h - 1; j++) {
    const iy = oy + j, Y = iy * dy, row = ((j + py) % py) * px;
    for (let i = -(a.w - 1); i <= b.w - 1; i++) {
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

/** Sum over the half spectrum (columns 1 .. px/2-1 twice) of the real part of the pair's products. */
function spectralPairSum(kx: Spectrum, ky: Spectrum, a: BoxSpectra, b: BoxSpectra, w: number, px: number, py: number): number {
  const kxr = kx.re, kxi = kx.im, kyr = ky.re, kyi = ky.im;
  const bar = a.bn.re, bai = a.bn.im, xar = a.fx.re, xai = a.fx.im, yar = a.fy.re, yai = a.fy.im;
  const bbr = b.bn.re, bbi = b.bn.im, xbr = b.fx.re, xbi = b.fx.im, ybr = b.fy.re, ybi = b.fy.im;
  const last = px / 2;
  let s = 0;
  for (let ky0 = 0; ky0 < py; ky0++) {
    for (let c = 0, i = ky0 * w; c < w; c++, i++) {
      // u = conj(FYb) Ba - conj(Bb) FYa, v = conj(FXb) Ba - conj(Bb) FXa.
      const ur = ybr[i] * bar[i] + ybi[i] * bai[i] - (bbr[i] * yar[i] + bbi[i] * yai[i]);
      const ui = ybr[i] * bai[i] - ybi[i] * bar[i] - (bbr[i] * yai[i] - bbi[i] * yar[i]);
      const vr = xbr[i] * bar[i] + xbi[i] * bai[i] - (bbr[i] * xar[i] + bbi[i] * xai[i]);
      const vi = xbr[i] * bai[i] - xbi[i] * bar[i] - (bbr[i] * xai[i] - bbi[i] * xar[i]);
      const term = kxr[i] * ur - kxi[i] * ui - (kyr[i] * vr - kyi[i] * vi);
      s += c === 0 || c === last ? term : 2 * term;
    }
  }
  return s;
}
