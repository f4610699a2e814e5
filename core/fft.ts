// Radix-2 fast Fourier transforms on split real/imaginary Float64Arrays, written for the 2-D
// convolutions of the helicity flux: a complex transform of one contiguous row, the same
// transform applied down the columns of a row-major block (butterflies run along whole rows, so
// the inner loop is contiguous), and a real-input transform of length 2m through one complex
// transform of length m. Forward uses exp(-2 pi i k n / N); inverse is unscaled (callers scale).

import type { SimdArena, SpectrumLayout } from './simdColumns.js';

export interface FftPlan {
  /** Transform length (a power of two). */
  readonly n: number;
  /** cos(2 pi k / n), sin(2 pi k / n) for k < n/2. */
  readonly cos: Float64Array;
  readonly sin: Float64Array;
  /** Bit-reversal permutation of 0..n-1. */
  readonly rev: Uint32Array;
}

/** True for 1, 2, 4, 8, ... */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 1 && (n & (n - 1)) === 0;
}

/** Smallest power of two >= n. */
export function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

export function createFftPlan(n: number): FftPlan {
  if (!isPowerOfTwo(n)) throw new RangeError(`FFT length must be a power of two, got ${n}`);
  const half = Math.max(1, n >> 1);
  const cos = new Float64Array(half);
  const sin = new Float64Array(half);
  for (let k = 0; k < half; k++) {
    cos[k] = Math.cos((2 * Math.PI * k) / n);
    sin[k] = Math.sin((2 * Math.PI * k) / n);
  }
  const rev = new Uint32Array(n);
  let bits = 0;
  while (1 << bits < n) bits++;
  for (let i = 0; i < n; i++) {
    let r = 0;
    for (let b = 0; b < bits; b++) r |= ((i >> b) & 1) << (bits - 1 - b);
    rev[i] = r;
  }
  return { n, cos, sin, rev };
}

/** In-place complex FFT of re/im[offset .. offset+n). `sign` -1 forward, +1 inverse (unscaled). */
export function fftRow(plan: FftPlan, re: Float64Array, im: Float64Array, offset: number, sign: -1 | 1): void {
  const { n, cos, sin, rev } = plan;
  if (n < 2) return;
  for (let i = 0; i < n; i++) {
    const j = rev[i];
    if (j > i) {
      const a = offset + i, b = offset + j;
      let t = re[a]; re[a] = re[b]; re[b] = t;
      t = im[a]; im[a] = im[b]; im[b] = t;
    }
  }
  // First stage (size 2) has unit twiddles.
  for (let i = offset, end = offset + n; i < end; i += 2) {
    const ar = re[i], ai = im[i], br = re[i + 1], bi = im[i + 1];
    re[i] = ar + br; im[i] = ai + bi;
    re[i + 1] = ar - br; im[i + 1] = ai - bi;
  }
  for (let size = 4; size <= n; size <<= 1) {
    const half = size >> 1;
    const step = n / size;
    for (let start = offset, end = offset + n; start < end; start += size) {
      for (let j = 0, k = 0; j < half; j++, k += step) {
        const wr = cos[k], wi = sign * sin[k];
        const p = start + j, q = p + half;
        const xr = re[q], xi = im[q];
        const tr = wr * xr - wi * xi;
        const ti = wr * xi + wi * xr;
        const ur = re[p], ui = im[p];
        re[p] = ur + tr; im[p] = ui + ti;
        re[q] = ur - tr; im[q] = ui - ti;
      }
    }
  }
}

/** Columns handled together by fftColumns: n rows of this many columns stay in cache. */
const COLUMN_BLOCK = 32;

/**
 * In-place complex FFT of length plan.n down every column of a row-major block of `width`
 * columns (row r occupies [r*width, (r+1)*width)). Only rows < `nonZeroRows` may be non-zero on
 * input (the rest must be zero): when that is at most half, the first stage copies instead of
 * adding. Columns are done in blocks so that all stages of a block run in cache.
 */
export function fftColumns(
  plan: FftPlan, re: Float64Array, im: Float64Array, width: number, sign: -1 | 1, nonZeroRows = plan.n,
): void {
  for (let c0 = 0; c0 < width; c0 += COLUMN_BLOCK) {
    fftColumnBlock(plan, re, im, width, c0, Math.min(width, c0 + COLUMN_BLOCK), sign, nonZeroRows * 2 <= plan.n);
  }
}

/**
 * The transform of columns c0..c1 of a row-major block of `width` columns (fftColumns' step).
 * With `inputBitReversed` the rows already stand in bit-reversed order (the caller wrote input row
 * i to row rev[i]) and the permutation is skipped; with `upperHalfZero` as well, input rows >= n/2
 * are taken as zero and never read (they sit at the odd rows), so they need not be written.
 */
export function fftColumnBlock(
  plan: FftPlan, re: Float64Array, im: Float64Array, width: number, c0: number, c1: number,
  sign: -1 | 1, upperHalfZero: boolean, inputBitReversed = false,
): void {
  const { n, cos, sin, rev } = plan;
  if (!inputBitReversed) {
    for (let i = 0; i < n; i++) {
      const j = rev[i];
      if (j > i) {
        const a = i * width, b = j * width;
        for (let c = c0; c < c1; c++) {
          let t = re[a + c]; re[a + c] = re[b + c]; re[b + c] = t;
          t = im[a + c]; im[a + c] = im[b + c]; im[b + c] = t;
        }
      }
    }
  }
  if (n < 2) return;
  // Size 2: unit twiddles. After bit reversal the partner row holds an input row >= n/2, which
  // is zero when the upper half is: a copy replaces the butterfly.
  for (let start = 0; start < n; start += 2) {
    const p = start * width, q = p + width;
    if (upperHalfZero) {
      for (let c = c0; c < c1; c++) { re[q + c] = re[p + c]; im[q + c] = im[p + c]; }
    } else {
      for (let c = c0; c < c1; c++) {
        const xr = re[q + c], xi = im[q + c], ur = re[p + c], ui = im[p + c];
        re[p + c] = ur + xr; im[p + c] = ui + xi;
        re[q + c] = ur - xr; im[q + c] = ui - xi;
      }
    }
  }
  let size = 4;
  // An odd count of remaining stages: one radix-2 stage, then pairs of stages.
  let stages = 0;
  for (let s = 4; s <= n; s <<= 1) stages++;
  if (stages % 2 === 1) {
    const half = 2, step = n / 4;
    for (let start = 0; start < n; start += 4) {
      for (let j = 0; j < half; j++) {
        const wr = cos[j * step], wi = sign * sin[j * step];
        const p = (start + j) * width, q = (start + j + half) * width;
        for (let c = c0; c < c1; c++) {
          const xr = re[q + c], xi = im[q + c];
          const tr = wr * xr - wi * xi, ti = wr * xi + wi * xr;
          const ur = re[p + c], ui = im[p + c];
          re[p + c] = ur + tr; im[p + c] = ui + ti;
          re[q + c] = ur - tr; im[q + c] = ui - ti;
        }
      }
    }
    size = 8;
  }
  // Two radix-2 stages (sizes s and 2s) per pass over the rows, as one radix-4 butterfly: four
  // rows a, b = a + s/2, c = a + s, d = c + s/2 go through both stages in registers (half the
  // memory traffic), with three twiddle products instead of four (W_2s^(j+s/2) = sign*i W_2s^j).
  const halfN = n >> 1;
  for (; size * 2 <= n; size <<= 2) {
    const h = size >> 1;
    const s2 = n / (2 * size), s1 = 2 * s2;
    for (let g = 0; g < n; g += 2 * size) {
      {
        // j = 0: every twiddle is 1.
        const a = g * width, b = a + h * width, cc = a + size * width, d = cc + h * width;
        for (let c = c0; c < c1; c++) {
          const ar = re[a + c], ai = im[a + c], br = re[b + c], bi = im[b + c];
          const cr = re[cc + c], ci = im[cc + c], dr = re[d + c], di = im[d + c];
          const a1r = ar + br, a1i = ai + bi, b1r = ar - br, b1i = ai - bi;
          const u1r = cr + dr, u1i = ci + di, vr = cr - dr, vi = ci - di;
          const u2r = -sign * vi, u2i = sign * vr;
          re[a + c] = a1r + u1r; im[a + c] = a1i + u1i;
          re[cc + c] = a1r - u1r; im[cc + c] = a1i - u1i;
          re[b + c] = b1r + u2r; im[b + c] = b1i + u2i;
          re[d + c] = b1r - u2r; im[d + c] = b1i - u2i;
        }
      }
      for (let j = 1; j < h; j++) {
        const w1r = cos[j * s1], w1i = sign * sin[j * s1];
        const w2r = cos[j * s2], w2i = sign * sin[j * s2];
        // W^(3j) beyond the table's half turn: cos, sin of (k - n/2) with the sign flipped.
        const k3 = 3 * j * s2;
        const w3r = k3 < halfN ? cos[k3] : -cos[k3 - halfN];
        const w3i = sign * (k3 < halfN ? sin[k3] : -sin[k3 - halfN]);
        const a = (g + j) * width, b = a + h * width, cc = a + size * width, d = cc + h * width;
        for (let c = c0; c < c1; c++) {
          const ar = re[a + c], ai = im[a + c];
          const xr = re[b + c], xi = im[b + c];
          const yr = re[cc + c], yi = im[cc + c];
          const zr = re[d + c], zi = im[d + c];
          const br = w1r * xr - w1i * xi, bi = w1r * xi + w1i * xr;
          const cr = w2r * yr - w2i * yi, ci = w2r * yi + w2i * yr;
          const dr = w3r * zr - w3i * zi, di = w3r * zi + w3i * zr;
          const a1r = ar + br, a1i = ai + bi, b1r = ar - br, b1i = ai - bi;
          const u1r = cr + dr, u1i = ci + di, vr = cr - dr, vi = ci - di;
          const u2r = -sign * vi, u2i = sign * vr;
          re[a + c] = a1r + u1r; im[a + c] = a1i + u1i;
          re[cc + c] = a1r - u1r; im[cc + c] = a1i - u1i;
          re[b + c] = b1r + u2r; im[b + c] = b1i + u2i;
          re[d + c] = b1r - u2r; im[d + c] = b1i - u2i;
        }
      }
    }
  }
}

export interface RealFftPlan {
  /** Real transform length N = 2m. */
  readonly n: number;
  readonly half: FftPlan;
  /** cos, sin of 2 pi k / N for k <= N/2. */
  readonly cos: Float64Array;
  readonly sin: Float64Array;
  /** Scratch row of length m. */
  readonly zr: Float64Array;
  readonly zi: Float64Array;
}

export function createRealFftPlan(n: number): RealFftPlan {
  if (!isPowerOfTwo(n) || n < 2) throw new RangeError(`real FFT length must be a power of two >= 2, got ${n}`);
  const m = n >> 1;
  const cos = new Float64Array(m + 1);
  const sin = new Float64Array(m + 1);
  for (let k = 0; k <= m; k++) {
    cos[k] = Math.cos((2 * Math.PI * k) / n);
    sin[k] = Math.sin((2 * Math.PI * k) / n);
  }
  return { n, half: createFftPlan(m), cos, sin, zr: new Float64Array(m), zi: new Float64Array(m) };
}

/**
 * Forward real FFT of x[inOffset .. inOffset+count) zero-extended to length N, into the
 * half spectrum outRe/outIm[outOffset .. outOffset+N/2] (N/2+1 values).
 */
export function realFftRow(
  plan: RealFftPlan, x: ArrayLike<number>, inOffset: number, count: number,
  outRe: Float64Array, outIm: Float64Array, outOffset: number,
): void {
  const m = plan.n >> 1;
  const { zr, zi, cos, sin } = plan;
  const len = Math.min(count, plan.n);
  const pairs = len >> 1;
  for (let i = 0, o = inOffset; i < pairs; i++, o += 2) { zr[i] = x[o]; zi[i] = x[o + 1]; }
  let next = pairs;
  if (len & 1) { zr[pairs] = x[inOffset + len - 1]; zi[pairs] = 0; next++; }
  if (next < m) { zr.fill(0, next); zi.fill(0, next); }
  fftRow(plan.half, zr, zi, 0, -1);
  // X[k] = E[k] + W^k O[k] with E = (Z[k] + conj Z[m-k]) / 2, O = (Z[k] - conj Z[m-k]) / 2i,
  // W = exp(-2 pi i / N); and X[m-k] = conj(E[k] - W^k O[k]): one pass serves k and m-k.
  outRe[outOffset] = zr[0] + zi[0]; outIm[outOffset] = 0;
  outRe[outOffset + m] = zr[0] - zi[0]; outIm[outOffset + m] = 0;
  for (let k = 1, h = m >> 1; k <= h; k++) {
    const b = m - k;
    const zkr = zr[k], zki = zi[k], zbr = zr[b], zbi = zi[b];
    const er = 0.5 * (zkr + zbr), ei = 0.5 * (zki - zbi);
    const or = 0.5 * (zki + zbi), oi = -0.5 * (zkr - zbr);
    const c = cos[k], sn = sin[k];
    const tr = c * or + sn * oi, ti = c * oi - sn * or;
    outRe[outOffset + k] = er + tr; outIm[outOffset + k] = ei + ti;
    outRe[outOffset + b] = er - tr; outIm[outOffset + b] = ti - ei;
  }
}

/**
 * Inverse real FFT of the half spectrum re/im[inOffset .. inOffset+N/2]; writes the first
 * `count` samples, times `scale`, to out[outOffset..]. With scale 1 a forward transform followed
 * by this one returns the input (the 1/N is included).
 */
export function realInverseFftRow(
  plan: RealFftPlan, re: Float64Array, im: Float64Array, inOffset: number,
  out: Float64Array, outOffset: number, count: number, scale = 1,
): void {
  const m = plan.n >> 1;
  const { zr, zi, cos, sin } = plan;
  // Z[k] = E[k] + i O[k] with E = (X[k] + conj X[m-k]) / 2, O = (X[k] - conj X[m-k]) / (2 W^k);
  // and Z[m-k] = conj(E[k]) + i conj(O[k]): one pass serves k and m-k.
  {
    const xr = re[inOffset], xi = im[inOffset], yr = re[inOffset + m], yi = -im[inOffset + m];
    const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi), or = 0.5 * (xr - yr), oi = 0.5 * (xi - yi);
    zr[0] = er - oi; zi[0] = ei + or;
  }
  for (let k = 1, h = m >> 1; k <= h; k++) {
    const b = m - k;
    const xr = re[inOffset + k], xi = im[inOffset + k];
    const yr = re[inOffset + b], yi = -im[inOffset + b];
    const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi);
    const dr = 0.5 * (xr - yr), di = 0.5 * (xi - yi);
    // divide by W^k = cos - i sin: multiply by cos + i sin
    const c = cos[k], sn = sin[k];
    const or = dr * c - di * sn, oi = dr * sn + di * c;
    zr[k] = er - oi; zi[k] = ei + or;
    // conj(E) + i conj(O) = (er + oi) + i (or - ei)
    zr[b] = er + oi; zi[b] = or - ei;
  }
  fftRow(plan.half, zr, zi, 0, 1);
  const s = scale / m;
  const len = Math.min(count, plan.n);
  const pairs = len >> 1;
  for (let i = 0, o = outOffset; i < pairs; i++, o += 2) { out[o] = zr[i] * s; out[o + 1] = zi[i] * s; }
  if (len & 1) out[outOffset + len - 1] = zr[pairs] * s;
}

/** Rows the batched real transforms take together: a block of N/2 x ROW_BLOCK stays in cache. */
export const ROW_BLOCK = 16;

/**
 * Scratch for the batched real transforms of one plan: N/2 rows of ROW_BLOCK columns. With `simd`
 * the arrays lie in that arena and its WebAssembly kernel runs the column butterflies.
 */
export interface RowBlock {
  readonly re: Float64Array;
  readonly im: Float64Array;
  readonly simd?: SimdArena;
}

/** Doubles a row block of `plan` takes (for sizing a SIMD arena). */
export function rowBlockLength(plan: RealFftPlan): number {
  return Math.max(1, plan.n >> 1) * ROW_BLOCK;
}

/** A row block; inside `simd` when given (whose plans must include plan.half). */
export function createRowBlock(plan: RealFftPlan, simd?: SimdArena): RowBlock {
  const size = rowBlockLength(plan);
  if (simd) return { re: simd.alloc(size), im: simd.alloc(size), simd };
  return { re: new Float64Array(size), im: new Float64Array(size) };
}

/**
 * fftColumnBlock(plan, re, im, width, 0, columns, sign, upperHalfZero, true): by the SIMD kernel
 * of `simd` when the arrays lie in its memory, otherwise by the TypeScript loops (bit-identical).
 */
export function columnBlockBitReversed(
  simd: SimdArena | undefined, plan: FftPlan, re: Float64Array, im: Float64Array, width: number, columns: number,
  sign: -1 | 1, upperHalfZero: boolean,
): void {
  if (simd?.columns(plan, re, im, width, columns, sign, upperHalfZero)) return;
  fftColumnBlock(plan, re, im, width, 0, columns, sign, upperHalfZero, true);
}

/**
 * Where frequency k of row r of a set of half spectra sits: offset + r*stride + k, or with
 * `block` b (a power of two) offset + floor(k / b)*stride + r*b + k % b (blocks of b frequencies
 * with the rows inside, stride being the block's size). As frequency(k) + r * rowStep.
 */
function spectrumIndex(offset: number, stride: number, block: number): SpectrumLayout & { frequency: (k: number) => number } {
  if (block <= 0) return { frequency: (k) => offset + k, rowStep: stride, offset, shift: 31, mask: -1, stride: 0 };
  const shift = Math.log2(block), mask = block - 1;
  return { frequency: (k) => offset + (k >> shift) * stride + (k & mask), rowStep: block, offset, shift, mask, stride };
}

/**
 * realFftRow for `rows` rows at once: row r of x starts at inOffset + r*inStride (`count` values,
 * zero-extended to N), its half spectrum goes to outRe/outIm[outOffset + r*outStride ..+N/2].
 * The rows are packed side by side into `block` in bit-reversed order and transformed together
 * (fftColumnBlock: the twiddles stay out of the inner loop); when count <= N/2 the zero upper half
 * of each packed row is never written nor added. The same sums as realFftRow, in the same order.
 * The packing and unpacking loops run frequency by frequency across the rows of the block, so the
 * block is read and written a row (contiguous) at a time.
 */
export function realFftRows(
  plan: RealFftPlan, x: ArrayLike<number>, inOffset: number, inStride: number, count: number, rows: number,
  outRe: Float64Array, outIm: Float64Array, outOffset: number, outStride: number, block: RowBlock, spectrumBlock = 0,
): void {
  const layout = spectrumIndex(outOffset, outStride, spectrumBlock);
  const { frequency, rowStep } = layout;
  const m = plan.n >> 1;
  const { cos, sin } = plan;
  const rev = plan.half.rev;
  const B = ROW_BLOCK;
  const zr = block.re, zi = block.im;
  const len = Math.min(count, plan.n);
  const pairs = len >> 1, odd = len & 1;
  const filled = pairs + odd;
  const upperZero = m >= 2 && filled * 2 <= m;
  // Rows the transform reads that the input leaves empty (with upperZero it never reads >= m/2).
  const zeroEnd = upperZero ? m >> 1 : m;
  for (let r0 = 0; r0 < rows; r0 += B) {
    const bw = Math.min(B, rows - r0);
    const o0 = inOffset + r0 * inStride;
    for (let i = 0; i < pairs; i++) {
      const t = rev[i] * B;
      for (let c = 0, o = o0 + 2 * i; c < bw; c++, o += inStride) { zr[t + c] = x[o]; zi[t + c] = x[o + 1]; }
    }
    if (odd) {
      const t = rev[pairs] * B;
      for (let c = 0, o = o0 + len - 1; c < bw; c++, o += inStride) { zr[t + c] = x[o]; zi[t + c] = 0; }
    }
    for (let i = filled; i < zeroEnd; i++) { const t = rev[i] * B; zr.fill(0, t, t + bw); zi.fill(0, t, t + bw); }
    columnBlockBitReversed(block.simd, plan.half, zr, zi, B, bw, -1, upperZero);
    {
      const f0 = frequency(0) + r0 * rowStep, fm = frequency(m) + r0 * rowStep;
      for (let c = 0; c < bw; c++) {
        outRe[f0 + c * rowStep] = zr[c] + zi[c]; outIm[f0 + c * rowStep] = 0;
        outRe[fm + c * rowStep] = zr[c] - zi[c]; outIm[fm + c * rowStep] = 0;
      }
    }
    if (block.simd?.realSplitOut(plan, zr, zi, B, bw, outRe, outIm, { ...layout, offset: layout.offset + r0 * rowStep })) continue;
    for (let k = 1, h = m >> 1; k <= h; k++) {
      const b = m - k;
      const cs = cos[k], sn = sin[k];
      const zk = k * B, zb = b * B;
      let ok = frequency(k) + r0 * rowStep, ob = frequency(b) + r0 * rowStep;
      for (let c = 0; c < bw; c++, ok += rowStep, ob += rowStep) {
        const zkr = zr[zk + c], zki = zi[zk + c], zbr = zr[zb + c], zbi = zi[zb + c];
        const er = 0.5 * (zkr + zbr), ei = 0.5 * (zki - zbi);
        const or = 0.5 * (zki + zbi), oi = -0.5 * (zkr - zbr);
        const tr = cs * or + sn * oi, ti = cs * oi - sn * or;
        outRe[ok] = er + tr; outIm[ok] = ei + ti;
        outRe[ob] = er - tr; outIm[ob] = ti - ei;
      }
    }
  }
}

/**
 * realInverseFftRow for `rows` rows at once: the half spectrum of row r at
 * re/im[inOffset + r*inStride ..+N/2], its first `count` samples times `scale` to
 * out[outOffset + r*outStride ..]. The same sums as realInverseFftRow, in the same order.
 */
export function realInverseFftRows(
  plan: RealFftPlan, re: Float64Array, im: Float64Array, inOffset: number, inStride: number, rows: number,
  out: Float64Array, outOffset: number, outStride: number, count: number, scale: number, block: RowBlock, spectrumBlock = 0,
): void {
  // inStride is the block stride with spectrumBlock
  const layout = spectrumIndex(inOffset, inStride, spectrumBlock);
  const { frequency, rowStep } = layout;
  const m = plan.n >> 1;
  const { cos, sin } = plan;
  const rev = plan.half.rev;
  const B = ROW_BLOCK;
  const zr = block.re, zi = block.im;
  const s = scale / m;
  const len = Math.min(count, plan.n);
  const pairs = len >> 1;
  for (let r0 = 0; r0 < rows; r0 += B) {
    const bw = Math.min(B, rows - r0);
    {
      let o0 = frequency(0) + r0 * rowStep, om = frequency(m) + r0 * rowStep;
      for (let c = 0; c < bw; c++, o0 += rowStep, om += rowStep) {
        const xr = re[o0], xi = im[o0], yr = re[om], yi = -im[om];
        const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi), or = 0.5 * (xr - yr), oi = 0.5 * (xi - yi);
        zr[c] = er - oi; zi[c] = ei + or; // rev[0] = 0
      }
    }
    const split = block.simd?.realSplitIn(plan, re, im, { ...layout, offset: layout.offset + r0 * rowStep }, zr, zi, B, bw) ?? false;
    for (let k = 1, h = split ? 0 : m >> 1; k <= h; k++) {
      const b = m - k;
      const cs = cos[k], sn = sin[k];
      const tk = rev[k] * B, tb = rev[b] * B;
      let ok = frequency(k) + r0 * rowStep, ob = frequency(b) + r0 * rowStep;
      for (let c = 0; c < bw; c++, ok += rowStep, ob += rowStep) {
        const xr = re[ok], xi = im[ok];
        const yr = re[ob], yi = -im[ob];
        const er = 0.5 * (xr + yr), ei = 0.5 * (xi + yi);
        const dr = 0.5 * (xr - yr), di = 0.5 * (xi - yi);
        const or = dr * cs - di * sn, oi = dr * sn + di * cs;
        zr[tk + c] = er - oi; zi[tk + c] = ei + or;
        zr[tb + c] = er + oi; zi[tb + c] = or - ei;
      }
    }
    columnBlockBitReversed(block.simd, plan.half, zr, zi, B, bw, 1, false);
    const o0 = outOffset + r0 * outStride;
    for (let i = 0; i < pairs; i++) {
      const t = i * B;
      for (let c = 0, o = o0 + 2 * i; c < bw; c++, o += outStride) { out[o] = zr[t + c] * s; out[o + 1] = zi[t + c] * s; }
    }
    if (len & 1) {
      const t = pairs * B;
      for (let c = 0, o = o0 + len - 1; c < bw; c++, o += outStride) out[o] = zr[t + c] * s;
    }
  }
}
