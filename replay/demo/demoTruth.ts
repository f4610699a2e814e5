// The demo's true series: the true rate of every frame as a rate sample (velocity method
// 'imposed'), integrated with the core budget, so that the truth is written and compared in the
// very same columns as a processed run. Pure (no Node APIs).

import type { BudgetPoint, BudgetSettings, BudgetState } from '../../core/budget.js';
import { accumulateBudget, emptyBudget } from '../../core/budget.js';
import type { RateSample } from '../../core/rateSample.js';
import type { DemoRegion } from './demoRegion.js';

/** The truth of frame i as a rate sample (no noise, the imposed velocity, the true labels). */
export function truthSample(region: DemoRegion, i: number): RateSample {
  const t = region.truthAt(i);
  return {
    time: t.time, dtS: 0, total: t.total, totalGa: t.total, spin: t.spin, orbit: t.orbit, background: t.background,
    sigmaTotal: 0, sigmaSpin: 0, sigmaOrbit: 0, sigmaMotion: 0, noiseG: 0, velocityMethod: 'imposed', splitMethod: 'labels', maskedFraction: 0, flags: [],
  };
}

/** The true samples of frames `indices` (all frames by default) with the budget after each. */
export function truthSeries(
  region: DemoRegion, indices?: readonly number[], settings: BudgetSettings = {},
): { sample: RateSample; point: BudgetPoint }[] {
  const list = indices ?? Array.from({ length: region.frameCount }, (_, i) => i);
  let state: BudgetState = emptyBudget();
  const out: { sample: RateSample; point: BudgetPoint }[] = [];
  for (const i of list) {
    const sample = truthSample(region, i);
    const step = accumulateBudget(state, sample, { cadenceS: region.cadenceS, ...settings });
    state = step.state;
    out.push({ sample, point: step.point });
  }
  return out;
}
