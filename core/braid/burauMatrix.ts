// The reduced Burau representation of the braid group B_n: (n-1) x (n-1) matrices over Z[t, 1/t]
// (Birman 1974, "Braids, links and mapping class groups", ch. 3; the blocks below from memory and
// checked against the braid relations in test/core/braidBurau.test.ts). sigma_i differs from the
// identity only in rows and columns i-1, i, i+1 (1-based):
//   1 < i < n-1:  [[1, t, 0], [0, -t, 0], [0, 1, 1]]
//   i = 1:        [[-t, 0], [1, 1]]        (rows/cols 1, 2)
//   i = n-1:      [[1, t], [0, -t]]        (rows/cols n-2, n-1)
//   n = 2:        [-t]
// A word's matrix is the product of its generators' matrices in the order of the word. Two forms:
// at t = -1 with exact integers (bigint), and at a complex t, kept scaled (the product grows like
// exp(entropy)), for the entropy bounds.

/** The block of sigma_position^sign at t (complex: re, im): [first row/col (0-based), size, entries re, entries im]. */
function block(n: number, position: number, sign: 1 | -1, tRe: number, tIm: number): { first: number; size: number; re: number[]; im: number[] } {
  // 1/t for the inverses.
  const d = tRe * tRe + tIm * tIm;
  const iRe = tRe / d, iIm = -tIm / d;
  const i = position;
  if (n === 2) return sign > 0 ? { first: 0, size: 1, re: [-tRe], im: [-tIm] } : { first: 0, size: 1, re: [-iRe], im: [-iIm] };
  if (i === 1) {
    return sign > 0
      ? { first: 0, size: 2, re: [-tRe, 0, 1, 1], im: [-tIm, 0, 0, 0] }
      : { first: 0, size: 2, re: [-iRe, 0, iRe, 1], im: [-iIm, 0, iIm, 0] };
  }
  if (i === n - 1) {
    return sign > 0
      ? { first: n - 3, size: 2, re: [1, tRe, 0, -tRe], im: [0, tIm, 0, -tIm] }
      : { first: n - 3, size: 2, re: [1, 1, 0, -iRe], im: [0, 0, 0, -iIm] };
  }
  return sign > 0
    ? { first: i - 2, size: 3, re: [1, tRe, 0, 0, -tRe, 0, 0, 1, 1], im: [0, tIm, 0, 0, -tIm, 0, 0, 0, 0] }
    : { first: i - 2, size: 3, re: [1, 1, 0, 0, -iRe, 0, 0, iRe, 1], im: [0, 0, 0, 0, -iIm, 0, 0, iIm, 0] };
}

function checkGenerator(n: number, position: number): void {
  if (!(n >= 2) || !Number.isInteger(position) || position < 1 || position > n - 1) {
    throw new RangeError(`sigma_${position} is not a generator of the braid group on ${n} strands`);
  }
}

/** A complex (n-1) x (n-1) matrix, row-major, kept as value = exp(logScale) * (re + i im). */
export interface ScaledComplexMatrix {
  readonly size: number;
  readonly re: Float64Array;
  readonly im: Float64Array;
  logScale: number;
}

export function identityScaled(size: number): ScaledComplexMatrix {
  const re = new Float64Array(size * size), im = new Float64Array(size * size);
  for (let k = 0; k < size; k++) re[k * size + k] = 1;
  return { size, re, im, logScale: 0 };
}

/** m <- m * B(sigma_position^sign) at t = (tRe, tIm), rescaled so that its largest entry is 1. In place. */
export function multiplyGeneratorComplex(m: ScaledComplexMatrix, n: number, position: number, sign: 1 | -1, tRe: number, tIm: number): void {
  checkGenerator(n, position);
  const { first, size: b, re: bRe, im: bIm } = block(n, position, sign, tRe, tIm);
  const s = m.size;
  const colRe = new Float64Array(b), colIm = new Float64Array(b);
  let largest = 0;
  for (let r = 0; r < s; r++) {
    for (let j = 0; j < b; j++) {
      let sr = 0, si = 0;
      for (let k = 0; k < b; k++) {
        const ar = m.re[r * s + first + k], ai = m.im[r * s + first + k];
        const br = bRe[k * b + j], bi = bIm[k * b + j];
        sr += ar * br - ai * bi; si += ar * bi + ai * br;
      }
      colRe[j] = sr; colIm[j] = si;
    }
    for (let j = 0; j < b; j++) { m.re[r * s + first + j] = colRe[j]; m.im[r * s + first + j] = colIm[j]; }
  }
  for (let k = 0; k < s * s; k++) largest = Math.max(largest, Math.abs(m.re[k]), Math.abs(m.im[k]));
  if (largest > 0 && (largest > 1e100 || largest < 1e-100)) {
    for (let k = 0; k < s * s; k++) { m.re[k] /= largest; m.im[k] /= largest; }
    m.logScale += Math.log(largest);
  }
}

/** The reduced Burau matrix of a word at a complex t (scaled form). */
export function burauComplex(n: number, word: readonly { position: number; sign: 1 | -1 }[], tRe: number, tIm: number): ScaledComplexMatrix {
  const m = identityScaled(n - 1);
  for (const g of word) multiplyGeneratorComplex(m, n, g.position, g.sign, tRe, tIm);
  return m;
}

/** m <- m * B(sigma_position^sign) at t = -1, exact; m is (n-1) x (n-1) row-major bigint. In place. */
export function multiplyGeneratorInteger(m: bigint[], n: number, position: number, sign: 1 | -1): void {
  checkGenerator(n, position);
  const { first, size: b, re } = block(n, position, sign, -1, 0);
  const s = n - 1;
  const bb = re.map((v) => BigInt(Math.round(v)));
  const col: bigint[] = new Array(b);
  for (let r = 0; r < s; r++) {
    for (let j = 0; j < b; j++) {
      let sum = 0n;
      for (let k = 0; k < b; k++) sum += m[r * s + first + k] * bb[k * b + j];
      col[j] = sum;
    }
    for (let j = 0; j < b; j++) m[r * s + first + j] = col[j];
  }
}

/** The identity as a bigint matrix of size (n-1). */
export function identityInteger(n: number): bigint[] {
  const s = n - 1;
  const m: bigint[] = new Array(s * s).fill(0n);
  for (let k = 0; k < s; k++) m[k * s + k] = 1n;
  return m;
}

/** The reduced Burau matrix of a word at t = -1: exact integers, row-major (n-1) x (n-1). */
export function burauInteger(n: number, word: readonly { position: number; sign: 1 | -1 }[]): bigint[] {
  const m = identityInteger(n);
  for (const g of word) multiplyGeneratorInteger(m, n, g.position, g.sign);
  return m;
}
