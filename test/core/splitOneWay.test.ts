// The split flows one way: the sample is computed on the tracked footpoints' labels, and the
// footpoint table takes the sample's split. Checked on the demo region, whose truth is known
// (its components move rigidly with imposed velocities; truth by the core engine on the
// noise-free field with the true labels, replay/demo/demoTruth.ts).
import { describe, expect, it } from 'vitest';
import { accumulateBudget, emptyBudget } from '../../core/budget.js';
import type { BudgetPoint } from '../../core/budget.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { truthSeries } from '../../replay/demo/demoTruth.js';

describe('the split flows one way', () => {
  // The whole 72 h story at an hourly cadence, with the demo's exact velocities.
  const d = demoRegion({ frames: 73, withVelocity: true });
  let state: AnalysisState = {};
  let budget = emptyBudget();
  let last: BudgetPoint | undefined;
  const spinRates = new Map<number, { integral: number; budget: number | null }>();
  for (let i = 0; i < d.frameCount; i++) {
    const a = analyseFrame(d.frameAt(i), state, {});
    state = a.state;
    const step = accumulateBudget(budget, a.sample!, { cadenceS: d.cadenceS });
    budget = step.state;
    last = step.point;
    const dt = a.footpoints!.dt;
    for (const row of a.footpoints!.footpoints) {
      // Followed ids only: a footpoint that continues keeps its id and its budget.
      const before = row.status === 'continued' ? spinRates.get(row.id) : undefined;
      const add = dt !== null && row.spinExact !== null ? row.spinExact * dt : 0;
      spinRates.set(row.id, { integral: (before?.integral ?? 0) + add, budget: row.spinBudget });
    }
  }
  const truth = truthSeries(d).at(-1)!.point.values;

  it('with the exact velocities, the spin and orbit budgets match the truth within 10% (the turning spot is one footpoint)', () => {
    expect(last!.values.spin / truth.spin).toBeGreaterThan(0.9);
    expect(last!.values.spin / truth.spin).toBeLessThan(1.1);
    expect(last!.values.orbit / truth.orbit).toBeGreaterThan(0.9);
    expect(last!.values.orbit / truth.orbit).toBeLessThan(1.1);
    // The total is the engine's arithmetic on the same field and velocity: equal to rounding of
    // the trapezoid over the same samples.
    expect(Math.abs(last!.values.total / truth.total - 1)).toBeLessThan(1e-3);
  });

  it("each footpoint's accumulated exact spin is the time integral of its per-sample spin", () => {
    const big = [...spinRates.entries()].filter(([, v]) => Math.abs(v.integral) > 1e40);
    expect(big.length).toBeGreaterThan(0);
    for (const [, v] of big) expect(v.budget! / v.integral).toBeCloseTo(1, 9);
  });

  it('the footpoint table carries the sample spin, and the top pairs are ordered by the exact orbit', () => {
    const a = analyseFrame(d.frameAt(40), {}, {});
    const fp = a.footpoints!;
    const spinSum = fp.footpoints.reduce((s, r) => s + (r.spinExact ?? 0), 0);
    expect(spinSum / a.sample!.spin).toBeCloseTo(1, 9);
    expect(fp.exact!.total / a.sample!.total).toBeCloseTo(1, 12);
    const sizes = fp.pairs.map((p) => Math.abs(p.orbitExact ?? 0));
    for (let k = 1; k < sizes.length; k++) expect(sizes[k]).toBeLessThanOrEqual(sizes[k - 1]);
  });
});
