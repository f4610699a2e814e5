// The Targets of issue 11 NOT met yet (with bx, by: emergence and shear within 15 % at 720 s).
// Named *.pending.ts so that `npm test` does not collect it; run on its own with
//   npx vitest run --config test/accuracy/vitest.pending.config.ts
// Move a describe block to targets.test.ts once the method meets it.
import { describe, expect, it } from 'vitest';
import { CADENCES, cell, compared, expectSigmaWithinFactor, meanError } from './targetChecks.js';

describe.each(CADENCES)('issue 11 targets at %i s cadence, 8 G, default settings, with bx, by', (cadenceS) => {
  it('emerging-twisted: emergence and shear each within 15 %', () => {
    const c = cell('emerging-twisted', cadenceS, 'vector');
    expect(c.summary.errors).toEqual([]);
    for (const part of ['emergence', 'shear'] as const) {
      const e = meanError(c, compared(c, (v) => v[part], (p) => c.seq.truths[p - 1][part]!));
      expect(Math.abs(e.mean), part).toBeLessThanOrEqual(0.15 + e.twoSE);
    }
    expectSigmaWithinFactor(c);
  });

  it('rising-twisted: the emergence of twist within 15 %, and no shear where v_t = 0 (below 15 % of the emergence)', () => {
    const c = cell('rising-twisted', cadenceS, 'vector');
    expect(c.summary.errors).toEqual([]);
    const e = meanError(c, compared(c, (v) => v.emergence, (p) => c.seq.truths[p - 1].emergence!));
    expect(Math.abs(e.mean)).toBeLessThanOrEqual(0.15 + e.twoSE);
    const s = meanError(c, compared(c, (v) => v.shear, () => 0, (p) => c.seq.truths[p - 1].emergence!));
    expect(Math.abs(s.mean)).toBeLessThanOrEqual(0.15 + s.twoSE);
    expectSigmaWithinFactor(c);
  });
});
