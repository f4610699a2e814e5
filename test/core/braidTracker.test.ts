// The braid fold over per-frame footpoint tables: the strand set, segments when it changes (a
// footpoint gone, merged or split, a newcomer outgrowing the smallest strand), the sliding window
// and the run joined by adding the segments' entropies.

import { describe, expect, it } from 'vitest';
import type { BraidFrameInput, BraidState } from '../../core/braid/braidTracker.js';
import { braidStep, emptyBraidState } from '../../core/braid/braidTracker.js';
import { braidInputFromFootpoints } from '../../core/braid/braidInput.js';
import { braidMemory, restoreBraidState } from '../../core/braid/braidMemory.js';
import { InputError } from '../../core/inputError.js';
import { exchangeFrames, GOLDEN, GOLDEN_ENTROPY } from './braidProtocols.js';

const PERIOD_H = (16 * 600) / 3600; // two exchanges of 8 frames 600 s apart

function inputs(frames: ReturnType<typeof exchangeFrames>, extra: (f: number) => BraidFrameInput['footpoints'] = () => []): BraidFrameInput[] {
  return frames.map((fr, f) => ({
    time: fr.time,
    footpoints: [...Array.from({ length: fr.x.length }, (_, k) => ({ id: 10 + k, x: fr.x[k], y: fr.y[k], flux: 1e20 * (1 + 0.01 * k) })), ...extra(f)],
  }));
}

function fold(list: BraidFrameInput[], settings = {}) {
  let state: BraidState = emptyBraidState();
  const reports = list.map((input) => { const r = braidStep(state, input, settings); state = r.state; return r.report; });
  return { state, reports };
}

describe('braid tracker', () => {
  it('follows the largest footpoints: the golden protocol at 0.962 per period, in the window and the run', () => {
    const { reports } = fold(inputs(exchangeFrames(3, GOLDEN, 6)), { strands: 3, windowS: 6 * 3600 });
    const last = reports[reports.length - 1];
    expect(last.strands).toEqual([12, 11, 10]);
    expect(last.segment!.entropy).toBeCloseTo(6 * GOLDEN_ENTROPY, 9);
    expect(last.run.ratePerHour!).toBeCloseTo(GOLDEN_ENTROPY / PERIOD_H, 9);
    expect(last.run.exact).toBe(true);
    // the window (6 h = 2.25 periods) holds the last 36 intervals
    expect(last.window!.hours).toBeCloseTo(6, 9);
    expect(last.window!.frames).toBe(37);
    expect(last.window!.word.length).toBeGreaterThanOrEqual(4);
    expect(last.window!.ratePerHour!).toBeGreaterThan(0.6 * GOLDEN_ENTROPY / PERIOD_H);
    expect(last.window!.ratePerHour!).toBeLessThan(1.2 * GOLDEN_ENTROPY / PERIOD_H);
    expect(reports[0].segmentStarted).toBe('first frame');
    expect(reports[0].window).toBeNull();
  });
  it('weights each crossing by the pair\'s flux product; the word stays unweighted', () => {
    const { reports } = fold(inputs(exchangeFrames(3, GOLDEN, 1)), { strands: 3, windowS: 1e6 });
    const w = reports[reports.length - 1].window!;
    expect(w.word.map((g) => g.sign)).toEqual(w.word.map((g) => g.sign).map((s) => (s > 0 ? 1 : -1)));
    // sigma_1 (ids 10, 11: +1.00e20 * 1.01e20) and sigma_2^-1 (ids 10, 12 after the swap: -1.00e20 * 1.02e20)
    expect(w.crossingHelicity).toBeCloseTo(1e40 * 1.01 - 1e40 * 1.02, -30);
  });
  it('starts a new segment when a strand vanishes, merges, or is outgrown; the run adds segments', () => {
    const frames = exchangeFrames(3, GOLDEN, 4);
    const list = inputs(frames);
    // frame 33 (after two periods): footpoint 11 reported merged
    list[33] = { ...list[33], broken: [11] };
    const { reports } = fold(list, { strands: 3 });
    expect(reports[33].segmentStarted).toBe('footpoint 11 merged or split');
    const last = reports[reports.length - 1];
    expect(last.run.segments).toBe(2);
    // two periods, then the interval 32 -> 33 lost (the start of an exchange whose crossing comes later), then two periods
    expect(last.run.entropy).toBeCloseTo(4 * GOLDEN_ENTROPY, 9);
    // a newcomer with twice the flux of the smallest strand starts a segment; one at 1.2x does not
    const grow = inputs(frames, (f) => (f >= 10 ? [{ id: 99, x: 50, y: 50, flux: (f >= 20 ? 2.0 : 1.2) * 1e20 }] : []));
    const g = fold(grow, { strands: 3 }).reports;
    expect(g[10].segmentStarted).toBeNull();
    expect(g[20].segmentStarted).toBe('footpoint 99 outgrew footpoint 10');
    expect(g[20].strands).toContain(99);
    // a strand gone
    const gone = inputs(frames).map((x, f) => (f === 40 ? { ...x, footpoints: x.footpoints.slice(1) } : x));
    expect(fold(gone, { strands: 3 }).reports[40].segmentStarted).toBe('footpoint 10 is gone');
  });
  it('a state stored as text and restored folds on exactly as the uninterrupted run (3 and 5 strands)', () => {
    for (const [n, word] of [[3, GOLDEN], [5, [...GOLDEN, { position: 3, sign: 1 }, { position: 4, sign: -1 }]]] as const) {
      const list = inputs(exchangeFrames(n, word, 3));
      const whole = fold(list, { strands: n, windowS: 3 * 3600 });
      const first = fold(list.slice(0, 23), { strands: n, windowS: 3 * 3600 });
      const text = braidMemory(first.state);
      let state = restoreBraidState(text);
      expect(state).toEqual(first.state);
      const rest = list.slice(23).map((input) => { const r = braidStep(state, input, { strands: n, windowS: 3 * 3600 }); state = r.state; return r.report; });
      expect(rest).toEqual(whole.reports.slice(23));
      expect(rest[rest.length - 1].run.entropy).toBeGreaterThan(0);
    }
    expect(() => restoreBraidState('{"segment": null}', 'frame 7')).toThrow(/frame 7: \(text\): is not a stored braid state/);
    expect(() => restoreBraidState('not json')).toThrow(InputError);
  });
  it('fewer than two footpoints: no braid, no error', () => {
    const r = braidStep(emptyBraidState(), { time: 0, footpoints: [{ id: 1, x: 0, y: 0, flux: 1 }] });
    expect(r.report.segment).toBeNull();
    expect(r.report.run.ratePerHour).toBeNull();
  });
  it('refuses a frame not after the last and bad settings, naming the field', () => {
    const list = inputs(exchangeFrames(3, GOLDEN, 1));
    const { state } = fold(list.slice(0, 3));
    expect(() => braidStep(state, list[1])).toThrow(InputError);
    expect(() => braidStep(state, list[1])).toThrow(/braid: time: .* is not after the last frame/);
    expect(() => braidStep(emptyBraidState(), list[0], { strands: 1 })).toThrow(/strands: must be an integer of at least 2/);
  });
  it('reads a footpoint analysis: merges and splits break the ids involved', () => {
    const input = braidInputFromFootpoints({
      time: 5,
      footpoints: [{ id: 1, x: 0, y: 0, flux: 2 }, { id: 4, x: 1, y: 0, flux: -1 }] as never,
      events: [
        { kind: 'merged', time: 5, id: 1, from: [1, 2], fluxes: [1, 1], flux: 2 },
        { kind: 'split', time: 5, id: 3, into: [3, 4], fluxes: [1, 1], flux: 2 },
        { kind: 'vanished', time: 5, id: 7, flux: 1, cause: 'unpaired', partner: null },
      ],
    });
    expect(input.footpoints).toEqual([{ id: 1, x: 0, y: 0, flux: 2 }, { id: 4, x: 1, y: 0, flux: -1 }]);
    expect([...input.broken!].sort()).toEqual([1, 2, 3, 4]);
  });
});
