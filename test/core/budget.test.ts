import { describe, expect, it } from 'vitest';
import type { BudgetPoint, BudgetSettings, BudgetState } from '../../core/budget.js';
import { accumulateBudget, emptyBudget, medianCadence } from '../../core/budget.js';
import type { RateSample } from '../../core/rateSample.js';
import { seededRandom } from '../support/random.js';

function sample(time: number, total: number, extra: Partial<RateSample> = {}): RateSample {
  return {
    time, dtS: 0, total, totalGa: total, spin: 0.25 * total, orbit: 0.5 * total, background: 0.25 * total,
    sigmaTotal: 0, sigmaSpin: 0, sigmaOrbit: 0, sigmaMotion: 0, noiseG: 5, velocityMethod: 'given', splitMethod: 'labels', maskedFraction: 0, flags: [], ...extra,
  };
}

function run(samples: RateSample[], settings: BudgetSettings = {}): { points: BudgetPoint[]; state: BudgetState } {
  let state = emptyBudget();
  const points: BudgetPoint[] = [];
  for (const s of samples) {
    const r = accumulateBudget(state, s, settings);
    points.push(r.point);
    state = r.state;
  }
  return { points, state };
}

describe('budget: trapezoid integral over irregular cadence', () => {
  const r = seededRandom(7);
  const times: number[] = [];
  let t = Date.UTC(2026, 2, 14, 6);
  for (let i = 0; i < 60; i++) { times.push(t); t += Math.round((40 + 40 * r()) * 1000); }

  it('a rate linear in time is integrated exactly (the trapezoid rule is exact for linear functions)', () => {
    const a = 3e36, b = -2e32; // Mx^2/s and Mx^2/s^2
    const t0 = times[0];
    const { points } = run(times.map((tt) => sample(tt, a + b * (tt - t0) / 1000)));
    const T = (times.at(-1)! - t0) / 1000;
    const exact = a * T + 0.5 * b * T * T;
    const last = points.at(-1)!;
    expect(Math.abs(last.values.total - exact) / Math.abs(exact)).toBeLessThan(1e-12);
    // Every component is integrated, with its own rate.
    expect(Math.abs(last.values.spin - 0.25 * exact) / Math.abs(exact)).toBeLessThan(1e-12);
    expect(Math.abs(last.values.orbit - 0.5 * exact) / Math.abs(exact)).toBeLessThan(1e-12);
    expect(Math.abs(last.values.totalGa - exact) / Math.abs(exact)).toBeLessThan(1e-12);
    expect(points[0].values.total).toBe(0);
    expect(last.gap).toBeUndefined();
  });

  it('a curved rate stays within the trapezoid error bound (b-a) h^2 max|f\'\'| / 12 of the exact integral', () => {
    // Standard error bound of the composite trapezoid rule (any numerical-analysis text).
    const w = 2 * Math.PI / 3600; // rad/s
    const A = 1e36;
    const t0 = times[0];
    const { points } = run(times.map((tt) => sample(tt, A * Math.sin(w * (tt - t0) / 1000))));
    const T = (times.at(-1)! - t0) / 1000;
    const exact = (A / w) * (1 - Math.cos(w * T));
    let hMax = 0;
    for (let i = 1; i < times.length; i++) hMax = Math.max(hMax, (times[i] - times[i - 1]) / 1000);
    const bound = (T * hMax * hMax * A * w * w) / 12;
    const err = Math.abs(points.at(-1)!.values.total - exact);
    expect(err).toBeLessThan(bound);
    expect(err).toBeGreaterThan(0);
  });

  it('emergence and shear stay null until a sample carries them, then start from zero', () => {
    const s = [sample(0, 1), sample(60_000, 1), sample(120_000, 1, { emergence: 2, shear: 4 }), sample(180_000, 1, { emergence: 2, shear: 4 })];
    const { points } = run(s);
    expect(Number.isNaN(points[1].values.emergence)).toBe(true);
    expect(points[2].values.emergence).toBe(0);
    expect(points[3].values.emergence).toBeCloseTo(120, 12);
    expect(points[3].values.shear).toBeCloseTo(240, 12);
  });

  it('a sample out of order is refused (ordering is the caller\'s job)', () => {
    let st = emptyBudget();
    st = accumulateBudget(st, sample(60_000, 1)).state;
    expect(() => accumulateBudget(st, sample(60_000, 1))).toThrow(/not after/);
    expect(() => accumulateBudget(st, sample(120_000, NaN))).toThrow(/non-finite total/);
  });
});

describe('budget: gaps', () => {
  const cadence = 60_000;
  const ts = [0, 1, 2, 3, 4, 5].map((i) => i * cadence).concat([5 * cadence + 600_000, 6 * cadence + 600_000]);
  const rate = 1e36;

  it('an interval longer than gapFactor x median cadence is marked and not integrated across by default', () => {
    const { points, state } = run(ts.map((t) => sample(t, rate)));
    const gapPoint = points[6];
    expect(gapPoint.gap).toEqual({ from: 5 * cadence, to: 5 * cadence + 600_000, bridged: false, medianCadenceS: 60 });
    expect(state.gaps).toHaveLength(1);
    // 5 intervals before the gap, one after; the 600 s of the gap add nothing.
    expect(points.at(-1)!.values.total).toBeCloseTo(rate * 60 * 6, -20);
    expect(medianCadence(state)).toBe(60);
  });

  it('bridging is an explicit setting, and the gap is still recorded as bridged', () => {
    const { points } = run(ts.map((t) => sample(t, rate)), { bridgeGaps: true });
    expect(points[6].gap?.bridged).toBe(true);
    expect(points.at(-1)!.values.total).toBeCloseTo(rate * (60 * 6 + 600), -20);
  });

  it('no gap is judged before the cadence is known, unless an expected cadence is given', () => {
    const early = [0, 60_000, 700_000].map((t) => sample(t, rate));
    expect(run(early).points[2].gap).toBeUndefined();
    expect(run(early, { cadenceS: 60 }).points[2].gap?.bridged).toBe(false);
  });

  it('a larger gapFactor accepts the same interval', () => {
    const { points } = run(ts.map((t) => sample(t, rate)), { gapFactor: 20 });
    expect(points[6].gap).toBeUndefined();
  });
});

describe('budget: accumulated 1-sigma', () => {
  it('equals sqrt(Sum w_i^2 s_i^2) with the trapezoid weights (independent errors)', () => {
    const h = 60, n = 25, s = 2e34;
    const { points } = run(Array.from({ length: n }, (_, i) => sample(i * h * 1000, 1e35, { sigmaTotal: s })));
    // Weights h/2, h, ..., h, h/2 for n samples.
    const expected = s * h * Math.sqrt(n - 2 + 0.5);
    expect(Math.abs(points.at(-1)!.sigmaTotal - expected) / expected).toBeLessThan(1e-12);
    expect(points[0].sigmaTotal).toBe(0);
    expect(points[1].sigmaTotal).toBeCloseTo(s * h * Math.sqrt(0.5), -20);
  });

  it('matches the scatter of the budget over noisy realisations of the rates (Monte Carlo, 400 runs)', () => {
    const rnd = seededRandom(11);
    const normal = () => Math.sqrt(-2 * Math.log(rnd() || 1e-300)) * Math.cos(2 * Math.PI * rnd());
    const times = [0, 50, 130, 170, 260, 300, 420, 470, 520].map((x) => x * 1000);
    const sig = times.map((_, i) => 1e34 * (1 + i % 3));
    const finals: number[] = [];
    let reported = 0;
    for (let k = 0; k < 400; k++) {
      const { points } = run(times.map((t, i) => sample(t, 1e35 + sig[i] * normal(), { sigmaTotal: sig[i] })));
      finals.push(points.at(-1)!.values.total);
      reported = points.at(-1)!.sigmaTotal;
    }
    const mean = finals.reduce((a, b) => a + b, 0) / finals.length;
    const sd = Math.sqrt(finals.reduce((a, b) => a + (b - mean) ** 2, 0) / (finals.length - 1));
    // 400 realisations: the sample sd is within about 3.5/sqrt(2*400) = 12% of the truth.
    expect(Math.abs(sd - reported) / reported).toBeLessThan(0.12);
  });

  it('an unbridged gap closes the weight of the sample before it at half an interval', () => {
    const s = 1e34;
    const ts = [0, 60, 120, 180, 900, 960].map((x) => x * 1000);
    const { points } = run(ts.map((t) => sample(t, 1, { sigmaTotal: s })));
    // Weights: 30, 60, 60, 30 | gap | 30, 30.
    const expected = s * Math.sqrt(30 ** 2 + 60 ** 2 + 60 ** 2 + 30 ** 2 + 30 ** 2 + 30 ** 2);
    expect(points[4].gap).toBeDefined();
    expect(Math.abs(points.at(-1)!.sigmaTotal - expected) / expected).toBeLessThan(1e-12);
  });
});
