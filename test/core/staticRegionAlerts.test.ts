// A static active region observed at 45 s cadence with 8 G noise, velocities inferred from the
// frames: nothing moves, so no rule on the rate or the budget may be raised. A scene of our own
// (flux of a large active region, about 1e22 Mx a side, so that noise-driven rates are large).
import { describe, expect, it } from 'vitest';
import { accumulateBudget, emptyBudget } from '../../core/budget.js';
import type { AnalysisSettings, AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { RulesState } from '../../core/alerts/evaluateRules.js';
import { alertRecords, emptyRules, evaluateRules } from '../../core/alerts/evaluateRules.js';
import type { Frame } from '../../core/frame.js';
import { seededRandom } from '../support/random.js';

const NX = 128, NY = 128, DX = 0.72;
const SPOTS = [
  { x: 30, y: 46, peak: 2600, a: 4.5, b: 3.2, angle: 0.4 }, { x: 58, y: 44, peak: -2400, a: 4.8, b: 4.8, angle: 0 },
  { x: 40, y: 64, peak: 900, a: 2.5, b: 1.8, angle: 1.1 }, { x: 66, y: 62, peak: -1100, a: 3, b: 2.2, angle: -0.5 },
];

function frame(k: number, noise: number): Frame {
  const r = seededRandom(500 + k);
  const bn = new Float64Array(NX * NY);
  for (let iy = 0; iy < NY; iy++) for (let ix = 0; ix < NX; ix++) {
    let b = 0;
    for (const s of SPOTS) {
      const dx = ix * DX - s.x, dy = iy * DX - s.y, c = Math.cos(s.angle), sn = Math.sin(s.angle);
      b += s.peak * Math.exp(-0.5 * (((c * dx + sn * dy) / s.a) ** 2 + ((-sn * dx + c * dy) / s.b) ** 2));
    }
    let u = 0;
    while (u === 0) u = r();
    bn[iy * NX + ix] = b + noise * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * r());
  }
  return { nx: NX, ny: NY, dx: DX, dy: DX, time: Date.UTC(2026, 6, 1, 0, 0, 45 * k), bn };
}

function run(settings: AnalysisSettings) {
  let state: AnalysisState = {};
  let budget = emptyBudget();
  let rules: RulesState = emptyRules();
  const rates: { rate: number; sigma: number }[] = [];
  for (let k = 0; k < 48; k++) {
    const a = analyseFrame(frame(k, 8), state, settings);
    state = a.state;
    if (!a.sample) continue;
    const b = accumulateBudget(budget, a.sample, { cadenceS: 45 });
    budget = b.state;
    rates.push({ rate: a.sample.total, sigma: a.sample.sigmaTotal });
    rules = evaluateRules(rules, {
      time: a.sample.time, rate: a.sample.total, sigmaRate: a.sample.sigmaTotal,
      budget: b.point.values.total, sigmaBudget: b.point.sigmaTotal,
    }).state;
  }
  return { rules, rates };
}

describe('a static region at 45 s cadence raises nothing', () => {
  const { rules, rates } = run({});

  it('no rule leaves quiet', () => {
    const states = alertRecords(rules).map((r) => `${r.rule}: ${r.state}`);
    expect(states.filter((s) => !s.endsWith('quiet'))).toEqual([]);
  });

  it('the rates scatter about zero within their reported 1-sigma', () => {
    // Normalised rates of a motionless scene: mean near 0 and spread near 1 if the 1-sigma is
    // honest (47 samples, correlated through shared frames: a loose band of 3 on the rms).
    const z = rates.map((r) => r.rate / r.sigma);
    const rms = Math.sqrt(z.reduce((s, v) => s + v * v, 0) / z.length);
    expect(rms).toBeLessThan(3);
    expect(rms).toBeGreaterThan(1 / 3);
  });

  it('the affine field alone (motionModel inferred) scatters far beyond its field-noise 1-sigma and raises the peak-rate rule: what this test guards against', () => {
    const other = run({ motionModel: 'inferred' });
    expect(alertRecords(other.rules).find((r) => r.rule === 'peak-rate')!.state).not.toBe('quiet');
  });
});
