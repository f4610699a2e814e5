// The analysis state survives a restart: stored as JSON after a frame, restored from that memory
// and the stored frames within the motion baseline, the run goes on exactly as without the stop
// (same samples to rounding, same footpoint ids, windings and spin budgets).
import { describe, expect, it } from 'vitest';
import { analysisMemory, memoryFrameTime, restoreAnalysisState } from '../../core/analysisMemory.js';
import type { AnalysisSettings, AnalysisState, FrameAnalysis } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { Frame } from '../../core/frame.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';

function run(frames: readonly Frame[], state: AnalysisState, settings: AnalysisSettings): { results: FrameAnalysis[]; state: AnalysisState } {
  const results: FrameAnalysis[] = [];
  for (const f of frames) {
    const a = analyseFrame(f, state, settings);
    results.push(a);
    state = a.state;
  }
  return { results, state };
}

describe('analysis memory across a restart', () => {
  for (const [name, withVelocity, cadenceS] of [['inferred velocities, 4 min cadence (history over the 720 s motion baseline)', false, 240], ['given velocities', true, 720]] as const) {
    it(name, () => {
      // A stretch of the demo story while the leading spot turns and small footpoints drift.
      const d = demoRegion({ frames: 16, cadenceS, storyH: 16 * cadenceS / 3600, storyStartH: 14, withVelocity, size: 96 });
      const frames = Array.from({ length: d.frameCount }, (_, i) => d.frameAt(i));
      const settings: AnalysisSettings = {};
      const whole = run(frames, {}, settings).results;
      const stop = 9;
      const first = run(frames.slice(0, stop + 1), {}, settings);
      const stored = JSON.parse(JSON.stringify(analysisMemory(first.state)));
      // The frames the monitor reads back: those within the motion baseline before the stop.
      const back = frames.slice(0, stop + 1).filter((f) => frames[stop].time - f.time <= 720e3);
      const restored = restoreAnalysisState(back, stored, settings);
      const after = run(frames.slice(stop + 1), restored, settings).results;
      after.forEach((a, k) => {
        const w = whole[stop + 1 + k];
        const scale = Math.abs(w.sample!.total) + Math.abs(w.sample!.spin) + Math.abs(w.sample!.orbit);
        for (const key of ['total', 'spin', 'orbit', 'sigmaTotal'] as const) {
          expect(Math.abs(a.sample![key] - w.sample![key])).toBeLessThanOrEqual(1e-12 * scale);
        }
        expect(a.footpoints!.footpoints.map((r) => r.id)).toEqual(w.footpoints!.footpoints.map((r) => r.id));
        expect(a.footpoints!.footpoints.map((r) => r.spinBudget)).toEqual(w.footpoints!.footpoints.map((r) => r.spinBudget));
        expect(Array.from(a.footpoints!.pairMatrix.windingTurns)).toEqual(Array.from(w.footpoints!.pairMatrix.windingTurns));
      });
      // Without the memory the footpoints' history starts again: what the memory is for.
      const fresh = run(frames.slice(stop + 1), restoreAnalysisState(back, undefined, settings), settings).results;
      expect(fresh.at(-1)!.footpoints!.state.budget.secondsExact).toBeLessThan(whole.at(-1)!.footpoints!.state.budget.secondsExact);
    });
  }

  it('a stop right after a pair too far apart to give a sample: with the frames of the older pair the table was made on, the run goes on as without the stop', () => {
    const d = demoRegion({ frames: 14, cadenceS: 240, storyH: 14 * 240 / 3600, storyStartH: 14, withVelocity: false, size: 96 });
    const t0 = d.frameAt(0).time;
    // 40 min between frames 7 and 8: more than the 1800 s a velocity is inferred across.
    const frames = Array.from({ length: 14 }, (_, i) => ({ ...d.frameAt(i), time: t0 + i * 240e3 + (i >= 8 ? 2400e3 : 0) }));
    const whole = run(frames, {}, {}).results;
    expect(whole[8].sample).toBeUndefined();
    const stop = 8;
    const stored = JSON.parse(JSON.stringify(analysisMemory(run(frames.slice(0, stop + 1), {}, {}).state)));
    const tableTime = memoryFrameTime(stored)!;
    expect(tableTime).toBe((frames[6].time + frames[7].time) / 2);
    const baseline = frames.slice(0, stop + 1).filter((f) => frames[stop].time - f.time <= 720e3);
    const withPair = frames.slice(0, stop + 1).filter((f) => frames[stop].time - f.time <= 720e3 || Math.abs(f.time - tableTime) <= 1800e3);
    const budgets = (results: FrameAnalysis[]) => results.map((a) => a.footpoints!.footpoints.map((r) => [r.id, r.spinBudget]));
    const after = run(frames.slice(stop + 1), restoreAnalysisState(withPair, stored, {}), {}).results;
    expect(budgets(after)).toEqual(budgets(whole.slice(stop + 1)));
    expect(Array.from(after.at(-1)!.footpoints!.pairMatrix.windingTurns)).toEqual(Array.from(whole.at(-1)!.footpoints!.pairMatrix.windingTurns));
    // With the baseline's frames alone the table's frame is missing and the spin budgets start again.
    const fresh = run(frames.slice(stop + 1), restoreAnalysisState(baseline, stored, {}), {}).results;
    expect(budgets(fresh)).not.toEqual(budgets(whole.slice(stop + 1)));
  });

  it('refuses a memory made after another frame', () => {
    const d = demoRegion({ frames: 4, size: 48 });
    const frames = [0, 1, 2].map((i) => d.frameAt(i));
    const m = analysisMemory(run(frames, {}, {}).state)!;
    expect(() => restoreAnalysisState(frames.slice(0, 2), m)).toThrow(/analysis memory: time: is for .* but the last frame is at/);
  });
});
