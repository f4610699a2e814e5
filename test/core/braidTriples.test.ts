// Triples: which 3-braids are trivial, which are braided with no net pairwise crossing, and
// Milnor's triple linking number mu(123) of the closed pure braid (Milnor 1954). Checks: the
// invariant is cyclically symmetric (mu(123) = mu(231) = mu(312), a property of mu-bar when the
// pairs do not link), is 1 in size for the Borromean braid and for the commutator of the two
// generators' squares, 0 for the trivial braid, and undefined (null) when a pair links.

import { describe, expect, it } from 'vitest';
import type { TripleState } from '../../core/braid/tripleBraid.js';
import { addTripleGenerator, emptyTriple, milnorCyclic, tripleSummary } from '../../core/braid/tripleBraid.js';

const run = (word: number[]): TripleState => word.reduce((s, g) => addTripleGenerator(s, Math.abs(g) as 1 | 2, g > 0 ? 1 : -1), emptyTriple());
const repeat = (w: number[], k: number) => Array.from({ length: k }, () => w).flat();

describe('triple braids', () => {
  it('the Borromean braid (sigma_1 sigma_2^-1)^3: braided, no pair crosses on balance, |mu| = 1', () => {
    const s = tripleSummary(run(repeat([1, -2], 3)));
    expect(s).toMatchObject({ pure: true, trivial: false, pairCrossings: [0, 0, 0] });
    expect(Math.abs(s.milnor!)).toBe(1);
    expect(s.entropy).toBeCloseTo(3 * Math.log((3 + Math.sqrt(5)) / 2), 12);
  });
  it('the inverse flips mu, the mirror keeps it, six periods double it', () => {
    // A length-k Milnor invariant changes by (-1)^(k-1) under a mirror image and by (-1)^k when every
    // component is reversed (from memory); the inverse braid closes to the mirror reversed.
    const b = tripleSummary(run(repeat([1, -2], 3))).milnor!;
    expect(tripleSummary(run(repeat([2, -1], 3))).milnor).toBe(-b);
    expect(tripleSummary(run(repeat([-1, 2], 3))).milnor).toBe(b);
    expect(tripleSummary(run(repeat([1, -2], 6))).milnor).toBe(2 * b);
  });
  it('the commutator of sigma_1^2 and sigma_2^2: pure, unlinked, |mu| = 1, entropy > 0', () => {
    const s = tripleSummary(run([1, 1, 2, 2, -1, -1, -2, -2]));
    expect(s).toMatchObject({ pure: true, trivial: false, pairCrossings: [0, 0, 0] });
    expect(Math.abs(s.milnor!)).toBe(1);
    expect(s.entropy).toBeGreaterThan(1);
  });
  it('mu is cyclically symmetric on unlinked pure braids', () => {
    for (const w of [repeat([1, -2], 3), [1, 1, 2, 2, -1, -1, -2, -2], [2, 2, 1, 1, -2, -2, -1, -1, 1, -2, 1, -2, 1, -2], repeat([1, -2], 9)]) {
      const c = milnorCyclic(run(w));
      expect(c[1]).toBe(c[0]);
      expect(c[2]).toBe(c[0]);
    }
  });
  it('trivial braids are trivial, whatever their word', () => {
    for (const w of [[], [1, -1], [1, 2, 1, -2, -1, -2], [1, -2, 2, -1], [2, 1, 2, -1, -2, -1]]) {
      const s = tripleSummary(run(w));
      expect(s.trivial).toBe(true);
      expect(s.milnor).toBe(0);
      expect(s.entropy).toBe(0);
    }
  });
  it('nontrivial braids that the matrix at t = -1 alone would miss: Delta^4 (exponent sum 12)', () => {
    const delta4 = repeat([1, 2], 6);
    const s = run(delta4);
    expect(s.burau).toEqual([1n, 0n, 0n, 1n]);
    expect(tripleSummary(s).trivial).toBe(false);
    // Delta^4 links every pair twice: not flagged, mu undefined
    expect(tripleSummary(s).pairCrossings).toEqual([4, 4, 4]);
    expect(tripleSummary(s).milnor).toBeNull();
  });
  it('a half exchange is not pure; a pure twist links one pair', () => {
    expect(tripleSummary(run([1]))).toMatchObject({ pure: false, trivial: false, milnor: null });
    expect(tripleSummary(run([2, 2]))).toMatchObject({ pure: true, trivial: false, pairCrossings: [0, 0, 2], milnor: null });
  });
});
