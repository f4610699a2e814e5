// The FFT against the discrete Fourier transform written out from its definition.
import { describe, expect, it } from 'vitest';
import { createFftPlan, createRealFftPlan, createRowBlock, fftColumns, fftRow, realFftRow, realFftRows, realInverseFftRow, realInverseFftRows } from '../../core/fft.js';
import { SPECTRUM_BLOCK, convolvePadded, createPaddedPlan, createPaddedWorkspace, createSpectrum, forwardPadded, inversePadded } from '../../core/paddedTransform.js';

function dft(re: number[], im: number[], sign: number): [number[], number[]] {
  const n = re.length;
  const or: number[] = [], oi: number[] = [];
  for (let k = 0; k < n; k++) {
    let sr = 0, si = 0;
    for (let t = 0; t < n; t++) {
      const a = (sign * 2 * Math.PI * k * t) / n;
      sr += re[t] * Math.cos(a) - im[t] * Math.sin(a);
      si += re[t] * Math.sin(a) + im[t] * Math.cos(a);
    }
    or.push(sr); oi.push(si);
  }
  return [or, oi];
}

function rand(n: number, seed: number): number[] {
  let s = seed;
  return Array.from({ length: n }, () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5);
}

describe('fft (checked against the DFT definition)', () => {
  for (const n of [1, 2, 4, 8, 64, 256]) {
    it(`complex length ${n}, forward and inverse`, () => {
      const re = rand(n, 1 + n), im = rand(n, 7 + n);
      for (const sign of [-1, 1] as const) {
        const [er, ei] = dft(re, im, sign);
        const r = Float64Array.from(re), i = Float64Array.from(im);
        fftRow(createFftPlan(n), r, i, 0, sign);
        for (let k = 0; k < n; k++) {
          expect(r[k]).toBeCloseTo(er[k], 10);
          expect(i[k]).toBeCloseTo(ei[k], 10);
        }
      }
    });
  }

  for (const [n, w, zeroUpper] of [[16, 5, true], [8, 3, false], [32, 4, true], [64, 2, false], [2, 3, true]] as const)
  it(`column transform of ${n} rows equals the DFT of each column (${zeroUpper ? 'zero upper half shortcut' : 'full'})`, () => {
    const re = new Float64Array(n * w), im = new Float64Array(n * w);
    const data = rand(n * w * 2, 3);
    const rows = zeroUpper ? n / 2 : n;
    for (let r = 0; r < rows; r++) for (let c = 0; c < w; c++) { re[r * w + c] = data[r * w + c]; im[r * w + c] = data[n * w + r * w + c]; }
    const copyR = Float64Array.from(re), copyI = Float64Array.from(im);
    fftColumns(createFftPlan(n), re, im, w, -1, rows);
    for (let c = 0; c < w; c++) {
      const colR = Array.from({ length: n }, (_, r) => copyR[r * w + c]);
      const colI = Array.from({ length: n }, (_, r) => copyI[r * w + c]);
      const [er, ei] = dft(colR, colI, -1);
      for (let k = 0; k < n; k++) {
        expect(re[k * w + c]).toBeCloseTo(er[k], 10);
        expect(im[k * w + c]).toBeCloseTo(ei[k], 10);
      }
    }
  });

  for (const [n, count] of [[2, 2], [4, 4], [32, 32], [128, 128], [32, 13], [16, 1]] as const) {
    it(`real length ${n} from ${count} samples: half spectrum equals the DFT, and the inverse returns the input`, () => {
      const x = rand(n, 11 + n).map((v, i) => (i < count ? v : 0));
      const [er, ei] = dft(x, new Array(n).fill(0), -1);
      const plan = createRealFftPlan(n);
      const sr = new Float64Array(n / 2 + 1), si = new Float64Array(n / 2 + 1);
      realFftRow(plan, x, 0, count, sr, si, 0);
      for (let k = 0; k <= n / 2; k++) {
        expect(sr[k]).toBeCloseTo(er[k], 10);
        expect(si[k]).toBeCloseTo(ei[k], 10);
      }
      const back = new Float64Array(n);
      realInverseFftRow(plan, sr, si, 0, back, 0, n);
      for (let t = 0; t < n; t++) expect(back[t]).toBeCloseTo(x[t], 12);
    });
  }
});

describe('batched real transforms and the fused padded convolution (same numbers as the one-row path)', () => {
  for (const [n, count, rows] of [[2, 1, 3], [8, 4, 17], [16, 7, 5], [64, 32, 33], [256, 100, 40], [32, 32, 16]] as const) {
    it(`realFftRows / realInverseFftRows, length ${n}, ${count} samples, ${rows} rows, agree with realFftRow / realInverseFftRow per row to 1e-12`, () => {
      const plan = createRealFftPlan(n), block = createRowBlock(plan);
      const x = Float64Array.from(rand(count * rows, 3 + n));
      const w = n / 2 + 1;
      const br = new Float64Array(w * rows), bi = new Float64Array(w * rows);
      realFftRows(plan, x, 0, count, count, rows, br, bi, 0, w, block);
      const sr = new Float64Array(w), si = new Float64Array(w);
      const back = new Float64Array(count * rows), one = new Float64Array(count);
      realInverseFftRows(plan, br, bi, 0, w, rows, back, 0, count, count, 0.5, block);
      let scale = 0;
      for (const v of br) scale = Math.max(scale, Math.abs(v));
      for (let r = 0; r < rows; r++) {
        realFftRow(plan, x, r * count, count, sr, si, 0);
        for (let k = 0; k < w; k++) {
          expect(Math.abs(br[r * w + k] - sr[k])).toBeLessThanOrEqual(1e-12 * scale);
          expect(Math.abs(bi[r * w + k] - si[k])).toBeLessThanOrEqual(1e-12 * scale);
        }
        realInverseFftRow(plan, sr, si, 0, one, 0, count, 0.5);
        for (let i = 0; i < count; i++) {
          expect(Math.abs(back[r * count + i] - one[i])).toBeLessThanOrEqual(1e-12);
          expect(back[r * count + i]).toBeCloseTo(0.5 * x[r * count + i], 12); // scale 0.5 halves the input
        }
      }
    });
  }

  for (const [nx, ny] of [[1, 1], [1, 6], [5, 1], [13, 9], [40, 33], [64, 64]] as const) {
    it(`convolvePadded ${nx}x${ny} equals forwardPadded, the product, inversePadded to 1e-12`, () => {
      const plan = createPaddedPlan(nx, ny), work = createPaddedWorkspace(plan, 3);
      const a = Float64Array.from(rand(nx * ny, 11)), b = Float64Array.from(rand(nx * ny, 12));
      const k = Float64Array.from(rand(plan.w * plan.py, 13));
      // Outputs: i k A^ and A^ B^ (a product of two inputs), the way the helicity flux uses them.
      const out1 = new Float64Array(nx * ny), out2 = new Float64Array(nx * ny);
      convolvePadded(plan, work, [a, b], [out1, out2], (inRe, inIm, outRe, outIm, c0, width, rev) => {
        for (let ky = 0; ky < plan.py; ky++) for (let c = 0; c < width; c++) {
          const s = ky * SPECTRUM_BLOCK + c, o = rev[ky] * SPECTRUM_BLOCK + c, kk = k[ky * plan.w + c0 + c];
          outRe[0][o] = -kk * inIm[0][s]; outIm[0][o] = kk * inRe[0][s];
          outRe[1][o] = inRe[0][s] * inRe[1][s] - inIm[0][s] * inIm[1][s];
          outIm[1][o] = inRe[0][s] * inIm[1][s] + inIm[0][s] * inRe[1][s];
        }
      });
      const sa = createSpectrum(plan), sb = createSpectrum(plan), s1 = createSpectrum(plan);
      forwardPadded(plan, a, nx, ny, sa);
      forwardPadded(plan, b, nx, ny, sb);
      for (let i = 0; i < k.length; i++) {
        s1.re[i] = -k[i] * sa.im[i]; s1.im[i] = k[i] * sa.re[i];
        const r = sa.re[i] * sb.re[i] - sa.im[i] * sb.im[i], m = sa.re[i] * sb.im[i] + sa.im[i] * sb.re[i];
        sb.re[i] = r; sb.im[i] = m;
      }
      const ref1 = new Float64Array(nx * ny), ref2 = new Float64Array(nx * ny);
      inversePadded(plan, s1, ref1);
      inversePadded(plan, sb, ref2);
      for (let i = 0; i < nx * ny; i++) {
        expect(Math.abs(out1[i] - ref1[i])).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(ref1[i])));
        expect(Math.abs(out2[i] - ref2[i])).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(ref2[i])));
      }
      // Nothing was carried over: a second call gives the same numbers.
      const again = new Float64Array(nx * ny);
      convolvePadded(plan, work, [a, b], [again], (inRe, inIm, outRe, outIm, c0, width, rev) => {
        for (let ky = 0; ky < plan.py; ky++) for (let c = 0; c < width; c++) {
          const s = ky * SPECTRUM_BLOCK + c, o = rev[ky] * SPECTRUM_BLOCK + c, kk = k[ky * plan.w + c0 + c];
          outRe[0][o] = -kk * inIm[0][s]; outIm[0][o] = kk * inRe[0][s];
        }
      });
      expect(Array.from(again)).toEqual(Array.from(out1));
    });
  }
});

describe('convolvePadded with zero input rows and a subset of output rows', () => {
  it('zero rows skipped on the way in and rows not asked for left 0 give the full result on the rows asked for', () => {
    const nx = 24, ny = 20;
    const plan = createPaddedPlan(nx, ny), work = createPaddedWorkspace(plan, 3);
    const a = Float64Array.from(rand(nx * ny, 21));
    for (const y of [0, 1, 7, 8, 9, 19]) a.fill(0, y * nx, y * nx + nx);
    const k = Float64Array.from(rand(plan.w * plan.py, 22));
    const step = (inRe: readonly Float64Array[], inIm: readonly Float64Array[], outRe: readonly Float64Array[], outIm: readonly Float64Array[], c0: number, width: number, rev: Uint32Array) => {
      for (let ky = 0; ky < plan.py; ky++) for (let c = 0; c < width; c++) {
        const s = ky * SPECTRUM_BLOCK + c, o = rev[ky] * SPECTRUM_BLOCK + c, kk = k[ky * plan.w + c0 + c];
        outRe[0][o] = -kk * inIm[0][s]; outIm[0][o] = kk * inRe[0][s];
      }
    };
    const full = new Float64Array(nx * ny), some = new Float64Array(nx * ny).fill(7);
    convolvePadded(plan, work, [a], [full], step);
    const rows = new Uint8Array(ny);
    for (const y of [2, 3, 8, 15]) rows[y] = 1;
    convolvePadded(plan, work, [a], [some], step, rows);
    // The reference: the old path, every row transformed.
    const sa = createSpectrum(plan), ref = new Float64Array(nx * ny);
    forwardPadded(plan, a, nx, ny, sa);
    for (let i = 0; i < k.length; i++) { const re = sa.re[i]; sa.re[i] = -k[i] * sa.im[i]; sa.im[i] = k[i] * re; }
    inversePadded(plan, sa, ref);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      const i = y * nx + x;
      expect(Math.abs(full[i] - ref[i])).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(ref[i])));
      expect(some[i]).toBe(rows[y] ? full[i] : 0);
    }
  });
});
