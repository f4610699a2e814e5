// Words in the free group on three letters x1, x2, x3 through their Magnus expansion truncated
// after degree two (Magnus, Karrass & Solitar 1966, from memory): x_i -> 1 + X_i, x_i^-1 -> 1 - X_i
// + X_i^2 in non-commuting X's, everything of degree three and up dropped. The truncation is a
// group, so a word's expansion can be built by multiplying letters and sub-words; coefficients are
// exact integers. Milnor's invariants are read off such coefficients (core/braid/tripleBraid.ts).

/** 1 + sum a_i X_i + sum b_ij X_i X_j (row-major b). */
export interface MagnusSeries {
  readonly a: readonly bigint[];
  readonly b: readonly bigint[];
}

export const MAGNUS_ONE: MagnusSeries = { a: [0n, 0n, 0n], b: new Array<bigint>(9).fill(0n) };

export function magnusProduct(p: MagnusSeries, q: MagnusSeries): MagnusSeries {
  const a = [0, 1, 2].map((i) => p.a[i] + q.a[i]);
  const b = new Array<bigint>(9);
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) b[i * 3 + j] = p.b[i * 3 + j] + q.b[i * 3 + j] + p.a[i] * q.a[j];
  return { a, b };
}

export function magnusInverse(p: MagnusSeries): MagnusSeries {
  // (1 + A + B)^-1 = 1 - A - B + A A  (to degree two)
  const a = p.a.map((v) => -v);
  const b = new Array<bigint>(9);
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) b[i * 3 + j] = -p.b[i * 3 + j] + p.a[i] * p.a[j];
  return { a, b };
}

/** The letter x_i^sign (i = 0, 1, 2). */
export function magnusLetter(i: number, sign: 1 | -1): MagnusSeries {
  const a = [0n, 0n, 0n];
  const b = new Array<bigint>(9).fill(0n);
  a[i] = sign > 0 ? 1n : -1n;
  if (sign < 0) b[i * 3 + i] = 1n;
  return { a, b };
}
