// The topological entropy of a braid (of the mapping class of the punctured disk it stands for):
// - 2 strands: 0 (every 2-braid is periodic);
// - 3 strands: exact, the log of the spectral radius of the reduced Burau matrix at t = -1, an
//   integer matrix of determinant 1 (core/braid/tripleBraid.ts says why);
// - more strands: a lower bound, the largest of
//     * log of the spectral radius of the reduced Burau matrix at UNIT_CIRCLE_SAMPLES values of t
//       on the upper half of the unit circle (for |t| = 1 it bounds the entropy from below: Kolev
//       1989, Fried 1986, as used by Band & Boyland 2007; from memory; B(conj t) = conj B(t), so the
//       lower half adds nothing), and
//     * the exact entropy of each of its 3-strand sub-braids: forgetting strands can only lower the
//       entropy, since every map in the braid's class keeping all n points fixed as a set is also
//       in the class of the sub-braid keeping 3 of them.
//   The bound is the entropy itself when the braid's invariant foliation has orientable
//   singularities, or when one triple carries all its stretching; measured figures in docs/braids.md.

import type { ScaledComplexMatrix } from './burauMatrix.js';
import { burauComplex, burauInteger } from './burauMatrix.js';
import { logSpectralRadius, sl2LogSpectralRadius } from './spectralRadius.js';

/** Points of the upper unit half-circle where the Burau bound is taken: t = exp(i pi k / (UNIT_CIRCLE_SAMPLES - 1)). */
export const UNIT_CIRCLE_SAMPLES = 65;

export type EntropyMethod = 'none' | 'burau-sl2z' | 'burau-unit-circle-bound';

export interface BraidEntropy {
  /** Dimensionless (per the whole braid). */
  readonly entropy: number;
  readonly method: EntropyMethod;
  /** True when `entropy` is the entropy itself, false when a lower bound. */
  readonly exact: boolean;
}

/** The t of sample k on the upper half circle. */
export function unitCircleSample(k: number): { re: number; im: number } {
  const phi = (Math.PI * k) / (UNIT_CIRCLE_SAMPLES - 1);
  // exactly -1 at the end (the integer representation)
  return k === UNIT_CIRCLE_SAMPLES - 1 ? { re: -1, im: 0 } : { re: Math.cos(phi), im: Math.sin(phi) };
}

/** Largest log spectral radius over the samples of the unit circle, from their matrices. */
export function unitCircleBound(products: readonly ScaledComplexMatrix[]): number {
  let best = 0;
  for (const m of products) best = Math.max(best, logSpectralRadius(m));
  return best;
}

/**
 * Entropy of the braid `word` on n strands. `subBraidEntropy` (the largest exact entropy of its
 * 3-strand sub-braids, when the caller has them) raises the bound for n > 3.
 */
export function braidEntropy(n: number, word: readonly { position: number; sign: 1 | -1 }[], subBraidEntropy = 0): BraidEntropy {
  if (n <= 2) return { entropy: 0, method: 'none', exact: true };
  if (n === 3) return { entropy: sl2LogSpectralRadius(burauInteger(3, word)), method: 'burau-sl2z', exact: true };
  const products = Array.from({ length: UNIT_CIRCLE_SAMPLES }, (_, k) => {
    const t = unitCircleSample(k);
    return burauComplex(n, word, t.re, t.im);
  });
  return { entropy: Math.max(unitCircleBound(products), subBraidEntropy), method: 'burau-unit-circle-bound', exact: false };
}
