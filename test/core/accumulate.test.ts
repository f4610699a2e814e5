import { describe, expect, it } from 'vitest';
import { accumulate, accumulateRefusal, emptyAccumulation, intervalsS, seriesCadenceS } from '../../core/accumulate.js';
import type { AccumulationState } from '../../core/accumulate.js';
import type { RateSample } from '../../core/rateSample.js';

function sample(time: number, total: number): RateSample {
  return {
    time, dtS: 0, total, totalGa: total, spin: 0.25 * total, orbit: 0.5 * total, background: 0.25 * total,
    sigmaTotal: 0, sigmaSpin: 0, sigmaOrbit: 0, sigmaMotion: 0, noiseG: 5, velocityMethod: 'given', splitMethod: 'labels', maskedFraction: 0, flags: ['given'],
  };
}

const T0 = Date.UTC(2026, 2, 14, 6);

describe('accumulate: budget, rules and series row in one step (core/accumulate.ts)', () => {
  // 60 s cadence, then an outage of 1000 s (more than 3 median cadences), then 60 s again.
  const times = [0, 60, 120, 180, 240, 1240, 1300].map((s) => T0 + s * 1000);
  const rate = 2e36;
  const run = () => {
    let state: AccumulationState = emptyAccumulation();
    const steps = times.map((t, i) => {
      const step = accumulate(state, sample(t, rate), {}, { frameId: 10 + i });
      state = step.state;
      return step;
    });
    return { state, steps };
  };

  it('integrates by the trapezoid rule, holds the budget over a gap and flags the first row after it', () => {
    const { steps } = run();
    // A constant rate: 240 s of it before the gap, 60 s after (the gap itself is not integrated).
    expect(steps.map((s) => s.row.budget_total)).toEqual([0, 60, 120, 180, 240, 240, 300].map((s) => s * rate));
    expect(steps.map((s) => s.row.flags.includes('after-gap'))).toEqual([false, false, false, false, false, true, false]);
    // The sample's own flags stay, in front.
    expect(steps[5].row.flags).toEqual(['given', 'after-gap']);
    expect(steps.map((s) => s.row.frame_id)).toEqual([10, 11, 12, 13, 14, 15, 16]);
    expect(steps[5].point.gap).toEqual({ from: times[4], to: times[5], bridged: false, medianCadenceS: 60 });
  });

  it('the gap raises the data-gap rule on that sample (its first change: quiet -> rising)', () => {
    const { steps, state } = run();
    const gapChanges = steps.map((s) => s.changes.filter((c) => c.alert.rule === 'data-gap').map((c) => c.change.to));
    expect(gapChanges[5][0]).toBe('rising');
    expect(gapChanges.slice(0, 5).flat()).toEqual([]);
    expect(state.rules.machines['data-gap']).toBeDefined();
    expect(state.budget.gaps).toHaveLength(1);
  });

  it('a sample not after the previous one is refused by the budget before the rules see it', () => {
    const { state } = run();
    expect(() => accumulate(state, sample(times[6], rate))).toThrow(RangeError);
  });

  it('a refusal reaches the refusals rule and leaves the budget as it was', () => {
    const { state } = run();
    const t = times[6] + 1000;
    let s = state;
    const seen: number[] = [];
    const raised: string[] = [];
    for (const dt of [0, 1, 2]) {
      seen.push(t + dt * 1000);
      const step = accumulateRefusal(s, t + dt * 1000, seen);
      s = step.state;
      raised.push(...step.changes.map((c) => `${c.alert.rule}:${c.change.to}`));
    }
    expect(s.budget).toBe(state.budget);
    // The third refusal within the hour meets the threshold of 3.
    expect(raised).toContain('refusals:rising');
    expect(s.rules.machines.refusals).toBeDefined();
  });
});

describe('seriesCadenceS: the cadence a series is reported with', () => {
  it('is the upper median of the intervals, one of them', () => {
    expect(intervalsS([0, 60_000, 180_000, 240_000])).toEqual([60, 120, 60]);
    expect(seriesCadenceS([720, 720, 1440, 1440])).toBe(1440);
    expect(seriesCadenceS([60, 60, 720])).toBe(60);
    expect(seriesCadenceS([])).toBeUndefined();
  });
});
