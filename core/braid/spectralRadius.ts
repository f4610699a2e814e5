// The logarithm of a matrix's spectral radius without its eigenvalues: rho = lim ||M^k||^(1/k)
// (Gelfand's formula), taken on M^(2^k) by repeated squaring with rescaling. After k squarings the
// error is at most (log C + d k log 2) / 2^k for a matrix whose powers grow like C rho^m m^d: with
// 40 squarings, below 1e-10 for C up to 1e3 and Jordan blocks alike. Equal-modulus eigenvalues
// (complex pairs, rotations) need no special care, which power iteration would.

import type { ScaledComplexMatrix } from './burauMatrix.js';

const SQUARINGS = 40;

/** log of the spectral radius of exp(m.logScale) * (m.re + i m.im). */
export function logSpectralRadius(m: ScaledComplexMatrix): number {
  const s = m.size, n2 = s * s;
  let re = Float64Array.from(m.re), im = Float64Array.from(m.im);
  let nr = new Float64Array(n2), ni = new Float64Array(n2);
  let norm = 0;
  for (let k = 0; k < n2; k++) norm = Math.max(norm, Math.abs(re[k]), Math.abs(im[k]));
  if (norm === 0) return -Infinity;
  for (let k = 0; k < n2; k++) { re[k] /= norm; im[k] /= norm; }
  // log of the scale of the current power M^p, divided by p
  let acc = Math.log(norm);
  let power = 1;
  for (let q = 0; q < SQUARINGS; q++) {
    let big = 0;
    for (let r = 0; r < s; r++) {
      for (let c = 0; c < s; c++) {
        let sr = 0, si = 0;
        for (let k = 0; k < s; k++) {
          const ar = re[r * s + k], ai = im[r * s + k], br = re[k * s + c], bi = im[k * s + c];
          sr += ar * br - ai * bi; si += ar * bi + ai * br;
        }
        nr[r * s + c] = sr; ni[r * s + c] = si;
        big = Math.max(big, Math.abs(sr), Math.abs(si));
      }
    }
    if (big === 0) return -Infinity; // nilpotent
    for (let k = 0; k < n2; k++) { nr[k] /= big; ni[k] /= big; }
    [re, nr] = [nr, re];
    [im, ni] = [ni, im];
    power *= 2;
    // scale(M^(2p)) = scale(M^p)^2 * big  ->  per unit power: acc + log(big) / (2p)
    acc += Math.log(big) / power;
  }
  return m.logScale + acc;
}

/** log of the spectral radius of an integer 2 x 2 matrix of determinant 1, exactly from its trace: 0 unless |trace| > 2. */
export function sl2LogSpectralRadius(m: readonly bigint[]): number {
  const tr = m[0] + m[3];
  const a = tr < 0n ? -tr : tr;
  if (a <= 2n) return 0;
  // rho = (|tr| + sqrt(tr^2 - 4)) / 2 = |tr| * (1 + sqrt(1 - 4/tr^2)) / 2
  const lt = bigintLog(a);
  const inv2 = Math.exp(-2 * lt); // 1/tr^2 (0 when tr is huge)
  return lt + Math.log((1 + Math.sqrt(1 - 4 * inv2)) / 2);
}

/** Natural log of a positive bigint of any size. */
export function bigintLog(x: bigint): number {
  if (x <= 0n) return -Infinity;
  const bits = x.toString(2).length;
  if (bits <= 1000) return Math.log(Number(x));
  const shift = bits - 64;
  return Math.log(Number(x >> BigInt(shift))) + shift * Math.LN2;
}
