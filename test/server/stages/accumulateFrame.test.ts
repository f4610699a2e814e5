// The accumulate stage (server/stages/accumulateFrames.ts) takes core's one step and hands on a new
// value: the computed frame and the state it started from are left as they were.
import { describe, expect, it } from 'vitest';
import { emptyAccumulation } from '../../../core/accumulate.js';
import type { RateSample } from '../../../core/rateSample.js';
import { accumulateFrame } from '../../../server/stages/accumulateFrames.js';
import type { ComputedFrame } from '../../../server/stages/frameWork.js';
import { DEFAULT_SETTINGS } from '../../../server/regionSettings.js';

const sample = (time: number, total: number): RateSample => ({
  time, dtS: 720, total, totalGa: total, spin: 0.25 * total, orbit: 0.75 * total, background: 0,
  sigmaTotal: 1e36, sigmaSpin: 0, sigmaOrbit: 0, sigmaMotion: 0, noiseG: 8, velocityMethod: 'given', splitMethod: 'labels', maskedFraction: 0, flags: [],
});
const computed = (id: number, s?: RateSample): ComputedFrame => ({
  frame: { id, time: s?.time ?? 0, source: 'test' } as ComputedFrame['frame'],
  reply: { id, ok: true, mapsWritten: false, ...(s && { sample: s }) },
  ...(s && { sample: s }),
});

describe('the accumulate stage', () => {
  it('gives a new state and a row; the input frame and state are unchanged', () => {
    const state = emptyAccumulation();
    const before = JSON.stringify(state);
    const c = computed(1, sample(Date.UTC(2026, 2, 15, 9), 2e40));
    const cBefore = JSON.stringify(c);
    const a1 = accumulateFrame(c, state, DEFAULT_SETTINGS);
    expect(JSON.stringify(state)).toBe(before);
    expect(JSON.stringify(c)).toBe(cBefore);
    expect(a1.row?.rate_total).toBe(2e40);
    expect(a1.row?.frame_id).toBe(1);
    // The second sample 720 s later: the trapezoid of the two rates over 720 s.
    const a2 = accumulateFrame(computed(2, sample(Date.UTC(2026, 2, 15, 9, 12), 4e40)), a1.state, DEFAULT_SETTINGS);
    expect(a2.row?.budget_total).toBeCloseTo(0.5 * (2e40 + 4e40) * 720, -30);
    expect(a1.row?.budget_total).toBe(0);
  });

  it('a frame without a sample carries the state on as it was; a sample out of time order becomes the frame\'s failure', () => {
    const a1 = accumulateFrame(computed(1, sample(Date.UTC(2026, 2, 15, 9), 2e40)), emptyAccumulation(), DEFAULT_SETTINGS);
    const none = accumulateFrame(computed(2), a1.state, DEFAULT_SETTINGS);
    expect(none.state).toBe(a1.state);
    expect(none.row).toBeUndefined();
    const back = accumulateFrame(computed(3, sample(Date.UTC(2026, 2, 15, 8), 1e40)), a1.state, DEFAULT_SETTINGS);
    expect(back.failure?.field).toBe('time');
    expect(back.sample).toBeUndefined();
    expect(back.state).toBe(a1.state);
  });
});
