// The 1-sigma of the rate (core/rateUncertainty.ts, linear propagation of field noise) and of the
// budget that accumulates it, against the scatter over 200 noise realisations of a synthetic
// frame with known added Gaussian noise. The Monte Carlo scatter is the reference; with 200
// realisations it is itself uncertain by about 1/sqrt(2*200) = 5% (1 sigma), well inside 20%.
import { describe, expect, it } from 'vitest';
import { accumulateBudget, emptyBudget } from '../../core/budget.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import { measureRate } from '../../core/measureRate.js';
import { seededNormal } from '../support/random.js';
import { spotFrame } from '../support/scenes.js';

const NOISE_G = 15;
const REALISATIONS = 200;

function scene(time = 0): Frame {
  // 48x48 pixels of 0.6 Mm: a spinning positive spot, a drifting negative one, a small third.
  return spotFrame(48, 48, 0.6, [
    { x: 10, y: 12, peak: 1200, sigma: 1.6, omega: 4e-5, vx: 0.2, vy: -0.1 },
    { x: 19, y: 15, peak: -900, sigma: 1.3, vx: -0.4, vy: 0.3 },
    { x: 14, y: 22, peak: 500, sigma: 1.0, vx: 0.1, vy: 0.5 },
  ], time);
}

function noisy(f: Frame, normal: () => number): Frame {
  return { ...f, bn: Float64Array.from(f.bn, (b) => b + NOISE_G * normal()) };
}

function sd(values: number[]): number {
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  return Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / (values.length - 1));
}

describe('rate and budget uncertainty against noise realisations', () => {
  const cache: FluxKernelCache = new Map();

  it(`the reported 1-sigma of the rate matches the scatter over ${REALISATIONS} realisations within 20%`, () => {
    const clean = scene();
    const normal = seededNormal(2024);
    const totals: number[] = [];
    const reported: number[] = [];
    for (let k = 0; k < REALISATIONS; k++) {
      const s = measureRate({ frame: noisy(clean, normal), noiseG: NOISE_G, cache }).sample;
      totals.push(s.total);
      reported.push(s.sigmaTotal);
    }
    const scatter = sd(totals);
    const meanReported = reported.reduce((a, b) => a + b, 0) / reported.length;
    expect(Math.abs(meanReported - scatter) / scatter).toBeLessThan(0.2);
    console.log(`rate sigma: reported ${meanReported.toExponential(3)}, scatter ${scatter.toExponential(3)}`);
    // The noise moves the rate visibly (every pixel carries a velocity in this scene, so the
    // noise far from the spots injects too): the check is not one of two tiny numbers.
    const cleanRate = measureRate({ frame: clean, cache }).sample.total;
    expect(scatter / Math.abs(cleanRate)).toBeGreaterThan(1e-2);
    // The noise level the core estimates from the frame itself (no noiseG given) is close to 15 G.
    const est = measureRate({ frame: noisy(clean, normal), cache }).sample.noiseG;
    expect(Math.abs(est - NOISE_G) / NOISE_G).toBeLessThan(0.1);
  });

  // 200 sequences of 3 frames; the scatter is then known to about 5%.
  it('the budget\'s accumulated 1-sigma matches the scatter of budgets over 200 noisy sequences within 20%', () => {
    const times = [0, 720_000, 1_500_000];
    const clean = times.map((t) => scene(t));
    const normal = seededNormal(77);
    const budgets: number[] = [];
    let reported = 0;
    for (let k = 0; k < 200; k++) {
      let st = emptyBudget();
      let last = 0;
      for (const f of clean) {
        const r = accumulateBudget(st, measureRate({ frame: noisy(f, normal), noiseG: NOISE_G, cache }).sample);
        st = r.state;
        last = r.point.values.total;
        reported = r.point.sigmaTotal;
      }
      budgets.push(last);
    }
    const scatter = sd(budgets);
    expect(Math.abs(reported - scatter) / scatter).toBeLessThan(0.2);
    console.log(`budget sigma: reported ${reported.toExponential(3)}, scatter ${scatter.toExponential(3)}`);
  });
});
