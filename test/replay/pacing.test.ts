// Replay pacing against a fake clock: frame i of an archive replayed at speed X is due X times
// sooner than in the archive (the definition of the speed factor), pause/resume/seek/speed.
import { describe, expect, it } from 'vitest';
import type { PacingClock } from '../../replay/pacing.js';
import { indexAtTime, nextDueAt, paceFrames, pause, pacingState, playbackTime, resume, seek, setSpeed, startPacing, takeDue } from '../../replay/pacing.js';

const T0 = Date.UTC(2026, 2, 14);
const times = [0, 720, 1440, 2160, 4000, 4720].map((s) => T0 + s * 1000); // 12 min cadence, one gap

function drain(p: ReturnType<typeof startPacing>, now: number) {
  const out: number[] = [];
  for (let t = takeDue(p, now); t; t = takeDue(p, now)) { out.push(t.index); p = t.pacing; }
  return { out, p };
}

describe('pacing (pure)', () => {
  it('makes frame i due at (t_i - t_0) / speed after the start', () => {
    let p = startPacing(times, 60, 1000);
    expect(nextDueAt(p)).toBe(1000);
    p = takeDue(p, 1000)!.pacing;
    expect(nextDueAt(p)).toBe(1000 + 720e3 / 60); // 12 s of wall time for 12 min at 60x
    expect(takeDue(p, 1000 + 11_999)).toBeUndefined();
    const t = takeDue(p, 1000 + 12_000)!;
    expect(t.index).toBe(1);
    // Frame 2 taken 1 s late: frame 3 is timed from then (37 s), and the gap of 1840 s after it
    // takes 1840/60 s.
    p = takeDue(t.pacing, 25_000)!.pacing;
    expect(takeDue(p, 36_999)).toBeUndefined();
    p = takeDue(p, 37_000)!.pacing;
    expect(p.position).toBe(4);
    expect(nextDueAt(p)).toBe(37_000 + (1840e3 / 60));
  });

  it('speed 0 hands every frame out at once; maxWaitMs caps long waits', () => {
    expect(drain(startPacing(times, 0, 5), 5).out).toEqual([0, 1, 2, 3, 4, 5]);
    const p = takeDue(startPacing(times, 1, 0, { maxWaitMs: 2000 }), 0)!.pacing;
    expect(nextDueAt(p)).toBe(2000);
  });

  it('pause stops the playback clock and resume restarts it where it stood', () => {
    let p = takeDue(startPacing(times, 60, 0), 0)!.pacing; // frame 0 out, frame 1 due at 12 s
    p = pause(p, 5000);
    expect(pacingState(p)).toBe('paused');
    expect(nextDueAt(p)).toBe(Infinity);
    expect(takeDue(p, 60_000)).toBeUndefined();
    expect(playbackTime(p, 60_000)).toBe(times[0] + 5000 * 60);
    p = resume(p, 65_000); // paused 60 s
    expect(pacingState(p)).toBe('playing');
    expect(nextDueAt(p)).toBe(72_000);
    expect(pause(pause(p, 1), 2).pausedAt).toBe(1);
    expect(resume(p, 3)).toBe(p);
  });

  it('seek by index or time makes that frame due at once, also while paused', () => {
    let p = startPacing(times, 60, 0);
    p = seek(p, { index: 4 }, 100);
    expect(takeDue(p, 100)!.index).toBe(4);
    p = seek(startPacing(times, 60, 0), { time: T0 + 1000e3 }, 50);
    expect(p.position).toBe(2);
    expect(indexAtTime(times, T0 + 2160e3)).toBe(3);
    let q = pause(startPacing(times, 60, 0), 10);
    q = seek(q, { index: 3 }, 20);
    expect(takeDue(q, 30)).toBeUndefined();
    q = resume(q, 1000);
    expect(takeDue(q, 1000)!.index).toBe(3);
    expect(() => seek(q, { index: 7 }, 0)).toThrow(/outside 0..6/);
    expect(pacingState(seek(q, { index: 6 }, 0))).toBe('done');
  });

  it('a speed change keeps the playback time', () => {
    let p = takeDue(startPacing(times, 60, 0), 0)!.pacing;
    // 6 s in at 60x: 360 s of archive played; at 120x the remaining 360 s take 3 s.
    p = setSpeed(p, 120, 6000);
    expect(playbackTime(p, 6000)).toBe(times[0] + 360e3);
    expect(nextDueAt(p)).toBe(9000);
    expect(() => setSpeed(p, -1, 0)).toThrow(/speed/);
    expect(() => startPacing([2, 1], 1, 0)).toThrow(/increase/);
  });
});

class FakeClock implements PacingClock {
  t = 0;
  sleeps: number[] = [];
  now() { return this.t; }
  async sleep(ms: number, wake: AbortSignal) {
    this.sleeps.push(ms);
    if (wake.aborted) return;
    // Time passes at once in this fake; a control call during the sleep is seen by the next turn.
    this.t += ms;
  }
}

describe('paceFrames (driver with a fake clock)', () => {
  it('yields every frame at its due time, and controls act at once', async () => {
    const clock = new FakeClock();
    const { control, indices } = paceFrames(times, 60, clock);
    const seen: [number, number][] = [];
    for await (const i of indices) {
      seen.push([i, clock.t]);
      if (i === 1) { control.pause(); clock.t += 30_000; control.resume(); }
      if (i === 2) control.seek({ index: 4 });
    }
    expect(seen).toEqual([[0, 0], [1, 12_000], [2, 54_000], [4, 54_000], [5, 66_000]]);
    expect(control.current().position).toBe(6);
  });

  it('stop ends the replay', async () => {
    const clock = new FakeClock();
    const { control, indices } = paceFrames(times, 0, clock);
    const seen: number[] = [];
    for await (const i of indices) { seen.push(i); if (i === 2) control.stop(); }
    expect(seen).toEqual([0, 1, 2]);
  });
});
