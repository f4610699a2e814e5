// The Targets of issue 11 that the methods meet, asserted on a subset of the accuracy suite (B-only
// scenes at 8 G, 720 s and 45 s, 5 realisations); tolerances in targetChecks.ts. The vector targets
// not met yet are in targets.pending.ts.
import { describe, expect, it } from 'vitest';
import { CADENCES, cell, compared, expectSigmaWithinFactor, meanError } from './targetChecks.js';

describe.each(CADENCES)('issue 11 targets at %i s cadence, 8 G, default settings, B only', (cadenceS) => {
  for (const name of ['translate-0.3', 'circle-15dph-20px']) {
    it(`${name}: total within 5 % of the true-motion G_theta; spurious spin below 5 % of the orbit term; 1-sigma within 1.5 of the scatter`, () => {
      const c = cell(name, cadenceS);
      expect(c.summary.errors).toEqual([]);
      const total = meanError(c, compared(c, (v) => v.total, (p) => c.seq.truths[p - 1].total));
      expect(Math.abs(total.mean)).toBeLessThanOrEqual(0.05 + total.twoSE);
      // These spots only move: their true spin is 0 (FFT rounding), so any spin is spurious. A
      // null spin (round footpoints: unobservable, said so) puts none on them.
      const spinRows = compared(c, (v) => v.spin, () => 0, (p) => c.seq.truths[p - 1].orbit);
      if (spinRows.length > 0) {
        const spin = meanError(c, spinRows);
        expect(Math.abs(spin.mean)).toBeLessThanOrEqual(0.05 + spin.twoSE);
      }
      expectSigmaWithinFactor(c);
    });
  }

  it('turn-ar1.3-2dph: the spin of an elongated spot (axis ratio 1.3) turning at 2 deg/h within 10 % from the third frame on', () => {
    const c = cell('turn-ar1.3-2dph', cadenceS);
    expect(c.summary.errors).toEqual([]);
    const spin = meanError(c, compared(c, (v) => v.spin, (p) => c.seq.truths[p - 1].spin));
    expect(Math.abs(spin.mean)).toBeLessThanOrEqual(0.1 + spin.twoSE);
    // The same from the footpoint table: the footpoint on the turning spot carries that spin.
    expect(c.summary.turning!.error).not.toBeNull();
    expect(Math.abs(c.summary.turning!.error!)).toBeLessThanOrEqual(0.1 + spin.twoSE);
    expectSigmaWithinFactor(c);
  });

  it('turn-among-others: the turning spot\'s spin within 10 % beside a static spot, a moving spot and diffuse flux', () => {
    const c = cell('turn-among-others', cadenceS);
    expect(c.summary.errors).toEqual([]);
    expect(c.summary.turning!.error).not.toBeNull();
    // Its standard error is taken from the scatter of the sample's spin, which holds the turning spot's.
    const spin = meanError(c, compared(c, (v) => v.spin, (p) => c.seq.truths[p - 1].spins['turning+']));
    expect(Math.abs(c.summary.turning!.error!)).toBeLessThanOrEqual(0.1 + spin.twoSE);
    expectSigmaWithinFactor(c);
  });

  it('rigid-ar1.6: a flux-balanced bipole turning rigidly, |total| below 10 % of its orbit term', () => {
    const c = cell('rigid-ar1.6', cadenceS);
    expect(c.summary.errors).toEqual([]);
    const total = meanError(c, compared(c, (v) => v.total, () => 0, (p) => c.seq.truths[p - 1].orbit));
    expect(Math.abs(total.mean)).toBeLessThanOrEqual(0.1 + total.twoSE);
    expectSigmaWithinFactor(c);
  });
});

