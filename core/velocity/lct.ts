// Local correlation tracking (November & Simon 1988). Around each window centre x0 both frames
// are apodised by a Gaussian of width sigma, the mean inside the window removed, and the
// cross-correlation C(s) = Sum a(x) b(x + s) taken by FFT; its peak is the shift of the pattern
// from frame a to frame b, refined to a fraction of a pixel by a 2-D quadratic fit of the log
// values (peakOffset2d).
//
// A window fixed on the same pixels in both frames pulls the peak toward zero shift (the window
// itself correlates best at zero lag). Three things remove that pull: a first look with windows
// twice as wide finds the rough shift; then frame a is apodised about x0 - s/2 and frame b about
// x0 + s/2 (s the current estimate, not rounded, which also puts the shift at mid-time), the
// correlation is divided by the overlap of the two windows before the peak fit, and it is shifted
// spectrally by the sub-pixel residual so that the fitted peak sits near lag 0. Passes stop when
// the estimate moves less than 0.001 pixel (at most MAX_PASSES).
//
// Masked (NaN), never guessed: windows with any NaN pixel, windows whose Gaussian-weighted rms
// field is below the threshold, peaks on the edge of the search range, flat or inverted peaks and
// peaks whose normalised correlation is below minCorrelation.

import { nextPowerOfTwo } from '../fft.js';
import type { PaddedPlan, Spectrum } from '../paddedTransform.js';
import { createPaddedPlan, createSpectrum, forwardPadded, inversePadded } from '../paddedTransform.js';
import { windowRadius } from './windowedSum.js';

export interface LctOptions {
  /** Gaussian window width, pixels. */
  readonly sigma: number;
  /** Window centres every `stride` pixels (the last row and column always included). */
  readonly stride: number;
  /** Smallest Gaussian-weighted rms field in a window, G. */
  readonly minSignal: number;
  /** Smallest normalised correlation at the peak. */
  readonly minCorrelation: number;
}

export interface LctResult {
  /** Shift from frame a to frame b, pixels, on every pixel (NaN where masked). */
  readonly sx: Float64Array;
  readonly sy: Float64Array;
  /** Window centres tried and those that gave a shift. */
  readonly windows: number;
  readonly windowsValid: number;
  /** Largest shift (pixels) the first, wide-window search can find. */
  readonly searchRadius: number;
}

/** Working storage for one window size: boxes, spectra and the correlation block. */
interface LctWork {
  readonly size: number;
  readonly half: number;
  readonly plan: PaddedPlan;
  readonly boxA: Float64Array;
  readonly boxB: Float64Array;
  readonly specA: Spectrum;
  readonly specB: Spectrum;
  readonly corr: Float64Array;
  /** The 3x3 neighbourhood of the peak. */
  readonly near: Float64Array;
  /** Phase factors of the spectral shift along x (half spectrum) and y. */
  readonly cosX: Float64Array;
  readonly sinX: Float64Array;
  readonly cosY: Float64Array;
  readonly sinY: Float64Array;
  /** Gaussian factors along the box's columns and rows. */
  readonly gx: Float64Array;
  readonly gy: Float64Array;
}

function createWork(sigma: number): LctWork {
  const r = windowRadius(sigma);
  const size = nextPowerOfTwo(2 * r + 1 + 2);
  const plan = createPaddedPlan(size / 2, size / 2); // padded size = `size`: a plain size x size transform
  return {
    size, half: size / 2, plan,
    boxA: new Float64Array(size * size), boxB: new Float64Array(size * size),
    specA: createSpectrum(plan), specB: createSpectrum(plan),
    corr: new Float64Array((size / 2) * (size / 2)), near: new Float64Array(9),
    cosX: new Float64Array(size / 2 + 1), sinX: new Float64Array(size / 2 + 1),
    cosY: new Float64Array(size), sinY: new Float64Array(size),
    gx: new Float64Array(size), gy: new Float64Array(size),
  };
}

/**
 * Fills `box` (size x size, origin at integer pixel (ox, oy)) with the mean-removed, Gaussian-
 * apodised map around the real centre (cx, cy). Returns the sum of squares, or NaN when a pixel
 * inside the window is NaN.
 */
function apodise(
  map: ArrayLike<number>, nx: number, ny: number, cx: number, cy: number, ox: number, oy: number,
  sigma: number, radius: number, box: Float64Array, size: number, gx: Float64Array, gy: Float64Array,
): number {
  box.fill(0);
  const inv = 1 / (2 * sigma * sigma);
  // The Gaussian is separable: one exponential per column and per row of the box.
  for (let i = 0; i < size; i++) { const e = ox + i - cx; gx[i] = Math.exp(-e * e * inv); }
  for (let j = 0; j < size; j++) { const e = oy + j - cy; gy[j] = Math.exp(-e * e * inv); }
  const i0 = Math.max(0, -ox), i1 = Math.min(size, nx - ox);
  // The Gaussian less its value at the cut radius, so the weight falls continuously to zero there:
  // a pixel crossing the cut as the window moves by a fraction of a pixel changes nothing abruptly.
  const floor = Math.exp(-radius * radius * inv);
  let sw = 0, swv = 0;
  for (let j = 0; j < size; j++) {
    const y = oy + j;
    if (y < 0 || y >= ny) continue;
    const row = y * nx + ox, wy = gy[j];
    if (wy <= floor) continue;
    for (let i = i0; i < i1; i++) {
      const w = gx[i] * wy - floor;
      if (w <= 0) continue;
      const v = map[row + i];
      if (v !== v) return NaN;
      box[j * size + i] = w; // weights first, values applied below
      sw += w; swv += w * v;
    }
  }
  if (sw === 0) return NaN;
  const mean = swv / sw;
  let ss = 0;
  for (let j = 0; j < size; j++) {
    const y = oy + j;
    if (y < 0 || y >= ny) continue;
    const row = y * nx + ox;
    for (let i = i0; i < i1; i++) {
      const k = j * size + i;
      const w = box[k];
      if (w === 0) continue;
      const v = w * (map[row + i] - mean);
      box[k] = v;
      ss += v * v;
    }
  }
  return ss;
}

/** Gaussian-weighted rms of the raw field inside the window at integer centre (x0, y0); NaN if a NaN is inside. */
function windowRms(map: ArrayLike<number>, nx: number, ny: number, x0: number, y0: number, sigma: number, radius: number): number {
  const inv = 1 / (2 * sigma * sigma);
  let sw = 0, swv = 0;
  for (let e = -radius; e <= radius; e++) {
    const y = y0 + e;
    if (y < 0 || y >= ny) continue;
    for (let d = -radius; d <= radius; d++) {
      const x = x0 + d;
      if (x < 0 || x >= nx || d * d + e * e > radius * radius) continue;
      const v = map[y * nx + x];
      if (v !== v) return NaN;
      const w = Math.exp(-(d * d + e * e) * inv);
      sw += w; swv += w * v * v;
    }
  }
  return Math.sqrt(swv / sw);
}

/**
 * Sub-pixel offset of a peak from its 3x3 neighbourhood v[(j+1)*3 + (i+1)], i, j in -1..1: the
 * stationary point of the quadratic through the central differences (gradient, second derivatives
 * and the cross term, so a tilted peak is located correctly), fitted to the logarithms when all nine
 * values are positive (exact for a Gaussian peak), else to the values. Undefined when not a peak.
 * With `window`, the log values first get c ((x + i)^2 + (y + j)^2) added: that divides the
 * correlation by the overlap of two Gaussian windows, exp(-|lag|^2 / (4 sigma^2)) with c = 1/(4 sigma^2),
 * where (x, y) is the peak's lag from the windows' own offset.
 */
export function peakOffset2d(
  v: ArrayLike<number>, window?: { readonly x: number; readonly y: number; readonly c: number },
): { dx: number; dy: number } | undefined {
  let all = true;
  for (let k = 0; k < 9; k++) if (!(v[k] > 0)) { all = false; break; }
  const f = all ? Array.from(v, Math.log) : Array.from(v);
  if (all && window) {
    for (let j = -1; j <= 1; j++) for (let i = -1; i <= 1; i++) {
      const ex = window.x + i, ey = window.y + j;
      f[(j + 1) * 3 + i + 1] += window.c * (ex * ex + ey * ey);
    }
  }
  const at = (i: number, j: number) => f[(j + 1) * 3 + (i + 1)];
  const gx = 0.5 * (at(1, 0) - at(-1, 0)), gy = 0.5 * (at(0, 1) - at(0, -1));
  const hxx = at(1, 0) - 2 * at(0, 0) + at(-1, 0);
  const hyy = at(0, 1) - 2 * at(0, 0) + at(0, -1);
  const hxy = 0.25 * (at(1, 1) - at(1, -1) - at(-1, 1) + at(-1, -1));
  const det = hxx * hyy - hxy * hxy;
  if (!(hxx < 0 && det > 0)) return undefined;
  return { dx: -(hyy * gx - hxy * gy) / det, dy: -(hxx * gy - hxy * gx) / det };
}

/**
 * One correlation of the windows about (x0 - s/2) in a and (x0 + s/2) in b. Returns the measured
 * shift and normalised peak, or undefined when masked.
 */
function correlateOnce(
  work: LctWork, a: ArrayLike<number>, b: ArrayLike<number>, nx: number, ny: number,
  x0: number, y0: number, sx: number, sy: number, sigma: number, radius: number,
): { sx: number; sy: number; peak: number } | undefined {
  const { size, half, plan, boxA, boxB, specA, specB, corr } = work;
  const cax = x0 - sx / 2, cay = y0 - sy / 2, cbx = x0 + sx / 2, cby = y0 + sy / 2;
  const oax = Math.round(cax) - half, oay = Math.round(cay) - half;
  const obx = Math.round(cbx) - half, oby = Math.round(cby) - half;
  const ea = apodise(a, nx, ny, cax, cay, oax, oay, sigma, radius, boxA, size, work.gx, work.gy);
  const eb = apodise(b, nx, ny, cbx, cby, obx, oby, sigma, radius, boxB, size, work.gx, work.gy);
  if (!(ea > 0) || !(eb > 0)) return undefined;
  forwardPadded(plan, boxA, size, size, specA);
  forwardPadded(plan, boxB, size, size, specB);
  // conj(A) B is the spectrum of C(s); times (-i)^(fx + fy) moves lag (-q, -q) to index (0, 0),
  // q = size/4, so the half x half block written back holds lags -q .. q-1.
  // conj(A) B is the spectrum of C(s). It is also shifted by the residual the integer box offset
  // leaves (C'(s) = C(s + r), exact for the band-limited apodised windows), so that the peak sits
  // near lag 0, where the quadratic fit is least biased; and by q = size/4 in each axis, so that
  // the half x half block written back holds lags -q .. q-1.
  const { w } = plan;
  const kx = obx - oax, ky = oby - oay;
  const rx = sx - kx, ry = sy - ky;
  const q = size / 4;
  const ar = specA.re, ai = specA.im, br = specB.re, bi = specB.im;
  const { cosX, sinX, cosY, sinY } = work;
  for (let fx = 0; fx < w; fx++) {
    const ph = (2 * Math.PI * fx * (rx - q)) / size;
    cosX[fx] = Math.cos(ph); sinX[fx] = Math.sin(ph);
  }
  for (let fy = 0; fy < size; fy++) {
    const f = fy <= size / 2 ? fy : fy - size;
    // the Nyquist row is kept unshifted in its fractional part (its phase is not defined)
    const ph = (2 * Math.PI * (f * ry - fy * q)) / size;
    cosY[fy] = Math.cos(ph); sinY[fy] = Math.sin(ph);
  }
  for (let fy = 0; fy < size; fy++) {
    for (let fx = 0; fx < w; fx++) {
      const k = fy * w + fx;
      const re = ar[k] * br[k] + ai[k] * bi[k];
      const im = ar[k] * bi[k] - ai[k] * br[k];
      const c = cosX[fx] * cosY[fy] - sinX[fx] * sinY[fy];
      const sn = sinX[fx] * cosY[fy] + cosX[fx] * sinY[fy];
      br[k] = re * c - im * sn;
      bi[k] = re * sn + im * c;
    }
  }
  inversePadded(plan, specB, corr);
  const c = 1 / (4 * sigma * sigma);
  let best = -Infinity, bx = 0, by = 0;
  for (let j = 0; j < half; j++) {
    for (let i = 0; i < half; i++) {
      const v = corr[j * half + i];
      if (v > best) { best = v; bx = i; by = j; }
    }
  }
  if (bx === 0 || by === 0 || bx === half - 1 || by === half - 1) return undefined;
  const near = work.near;
  for (let j = -1; j <= 1; j++) for (let i = -1; i <= 1; i++) near[(j + 1) * 3 + i + 1] = corr[(by + j) * half + bx + i];
  const off = peakOffset2d(near, { x: bx - q, y: by - q, c: 1 / (4 * sigma * sigma) });
  // The sampled maximum can sit a pixel away from the refined peak (the window overlap tilts the
  // raw correlation); further than 1.5 pixels is no longer a fit of this peak.
  if (!off || Math.abs(off.dx) > 1.5 || Math.abs(off.dy) > 1.5) return undefined;
  const fx = off.dx, fy = off.dy;
  return {
    sx: kx + rx + bx - q + fx,
    sy: ky + ry + by - q + fy,
    peak: best / Math.sqrt(ea * eb),
  };
}

/** Passes of window re-centring at most; they stop earlier once a pass moves the shift < 0.001 px. */
const MAX_PASSES = 6;

/** Lattice of window centres along one axis: 0, stride, 2 stride, ..., always ending at n - 1. */
function lattice(n: number, stride: number): number[] {
  const out: number[] = [];
  for (let k = 0; k < n; k += stride) out.push(k);
  if (out[out.length - 1] !== n - 1) out.push(n - 1);
  return out;
}

/** Shift maps from frame a to frame b by local correlation tracking. */
export function localCorrelationTracking(
  a: ArrayLike<number>, b: ArrayLike<number>, nx: number, ny: number, options: LctOptions,
): LctResult {
  const { sigma, stride, minSignal, minCorrelation } = options;
  const radius = windowRadius(sigma);
  const work = createWork(sigma);
  const coarse = createWork(2 * sigma);
  const coarseRadius = windowRadius(2 * sigma);
  const xs = lattice(nx, stride), ys = lattice(ny, stride);
  const lx = xs.length, ly = ys.length;
  const nodeX = new Float64Array(lx * ly).fill(NaN);
  const nodeY = new Float64Array(lx * ly).fill(NaN);
  let windowsValid = 0;
  for (let jy = 0; jy < ly; jy++) {
    for (let jx = 0; jx < lx; jx++) {
      const x0 = xs[jx], y0 = ys[jy];
      const rms = windowRms(a, nx, ny, x0, y0, sigma, radius);
      if (!(rms >= minSignal)) continue;
      // A first look with windows twice as wide finds shifts of several pixels that the
      // narrow windows, fixed on the same pixels, would barely overlap.
      const first = correlateOnce(coarse, a, b, nx, ny, x0, y0, 0, 0, 2 * sigma, coarseRadius);
      if (!first || !(first.peak >= minCorrelation)) continue;
      let sx = first.sx, sy = first.sy, ok = false;
      for (let pass = 0; pass < MAX_PASSES; pass++) {
        const m = correlateOnce(work, a, b, nx, ny, x0, y0, sx, sy, sigma, radius);
        if (!m || !(m.peak >= minCorrelation)) { ok = false; break; }
        const moved = Math.hypot(m.sx - sx, m.sy - sy);
        sx = m.sx; sy = m.sy; ok = true;
        if (moved < 0.001) break;
      }
      if (!ok) continue;
      nodeX[jy * lx + jx] = sx;
      nodeY[jy * lx + jx] = sy;
      windowsValid++;
    }
  }
  const out = { sx: new Float64Array(nx * ny), sy: new Float64Array(nx * ny) };
  interpolateLattice(nodeX, xs, ys, nx, ny, out.sx);
  interpolateLattice(nodeY, xs, ys, nx, ny, out.sy);
  return { ...out, windows: lx * ly, windowsValid, searchRadius: coarse.size / 4 - 2 };
}

/** Bilinear interpolation of lattice values to every pixel; NaN when a corner that counts is NaN. */
function interpolateLattice(node: Float64Array, xs: number[], ys: number[], nx: number, ny: number, out: Float64Array): void {
  const lx = xs.length;
  let jy = 0;
  for (let y = 0; y < ny; y++) {
    while (jy < ys.length - 2 && y > ys[jy + 1]) jy++;
    const y0 = ys[jy], y1 = ys[Math.min(jy + 1, ys.length - 1)];
    const ty = y1 === y0 ? 0 : (y - y0) / (y1 - y0);
    let jx = 0;
    for (let x = 0; x < nx; x++) {
      while (jx < lx - 2 && x > xs[jx + 1]) jx++;
      const x0 = xs[jx], x1 = xs[Math.min(jx + 1, lx - 1)];
      const tx = x1 === x0 ? 0 : (x - x0) / (x1 - x0);
      const jx1 = Math.min(jx + 1, lx - 1), jy1 = Math.min(jy + 1, ys.length - 1);
      // A NaN corner with a weight makes the pixel NaN; one with zero weight does not count.
      let s = 0;
      const w00 = (1 - tx) * (1 - ty), w10 = tx * (1 - ty), w01 = (1 - tx) * ty, w11 = tx * ty;
      if (w00 !== 0) s += w00 * node[jy * lx + jx];
      if (w10 !== 0) s += w10 * node[jy * lx + jx1];
      if (w01 !== 0) s += w01 * node[jy1 * lx + jx];
      if (w11 !== 0) s += w11 * node[jy1 * lx + jx1];
      out[y * nx + x] = s;
    }
  }
}
