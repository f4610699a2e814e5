// The FFT against the discrete Fourier transform written out from its definition.
import { describe, expect, it } from 'vitest';
import { createFftPlan, createRealFftPlan, fftColumns, fftRow, realFftRow, realInverseFftRow } from '../../core/fft.js';

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
