// A replay session over an archive on disk, with a fake clock: frames reach the consumer in time
// order at their due times (pacing at speed X), controls work, the status has docs/api.md's shape.
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { frameToJson } from '../../core/frameJson.js';
import { openArchive } from '../../replay/archiveSource.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import type { PacingClock } from '../../replay/pacing.js';
import { startReplay } from '../../replay/pacedReplay.js';

class FakeClock implements PacingClock {
  t = 0;
  now() { return this.t; }
  async sleep(ms: number, wake: AbortSignal) { if (!wake.aborted) this.t += ms; }
}

let dir: string;
const d = demoRegion({ size: 16, frames: 5 }); // 18 h apart
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'helicord-replay-'));
  // Names in reverse time order: the replay follows time.
  for (let i = 0; i < 5; i++) await writeFile(join(dir, `f${4 - i}.json`), JSON.stringify(frameToJson(d.frameAt(i))));
});
afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

describe('replay session', () => {
  it('hands frames over in time order at X times the archive pace', async () => {
    const clock = new FakeClock();
    const archive = await openArchive(dir);
    const got: [number, number][] = [];
    const s = startReplay(archive, 3600, async (frame) => { got.push([frame.time, clock.t]); }, { clock });
    expect(s.status()).toMatchObject({ speed: 3600, total: 5 });
    await s.done;
    // 18 h of archive between frames at 3600x: 18 s of wall time.
    expect(got).toEqual([0, 1, 2, 3, 4].map((i) => [d.timeAt(i), i * 18_000]));
    expect(s.status()).toEqual({ state: 'done', speed: 3600, position: 5, total: 5 });
  });

  it('seeks by ISO time and by index, pauses and stops', async () => {
    const clock = new FakeClock();
    const archive = await openArchive(dir);
    const got: number[] = [];
    let s: ReturnType<typeof startReplay>;
    s = startReplay(archive, 0, async (_f, i) => {
      got.push(i);
      if (i === 0) s.seek(new Date(d.timeAt(3)).toISOString());
      if (i === 3) { s.pause(); expect(s.status().state).toBe('paused'); s.seek(1); s.resume(); }
      if (i === 2) s.stop();
    }, { clock });
    await s.done;
    expect(got).toEqual([0, 3, 1, 2]);
    expect(() => s.seek('yesterday')).toThrow(/neither a frame index nor an ISO 8601 time/);
  });

  it('plays any source of timed frames, from a given start (a replay resumed after a restart)', async () => {
    const clock = new FakeClock();
    // A source that is not a folder: frame i is just its index (the shape server/regionReplay.ts uses).
    const times = [0, 60_000, 180_000, 240_000];
    const source = { entries: times.map((time) => ({ time })), frame: async (i: number) => ({ i }) };
    const got: [number, number][] = [];
    const s = startReplay(source, 60, async (f) => { got.push([f.i, clock.t]); }, { clock, start: 1 });
    expect(s.status()).toMatchObject({ position: 2, total: 4 }); // frame 1 was due at once and is handed over
    await s.done;
    // Frame 1 at once, then the archive's 2 and 1 minutes at 60x: 2 s and 1 s.
    expect(got).toEqual([[1, 0], [2, 2000], [3, 3000]]);
    expect(() => startReplay(source, 1, async () => undefined, { clock, start: 5 })).toThrow(/outside 0\.\.4/);
  });

  it('is done only when the consumer has taken the last frame, not when it is handed over', async () => {
    const source = { entries: [0, 60_000].map((time) => ({ time })), frame: async (i: number) => ({ i }) };
    let release!: () => void;
    const held = new Promise<void>((ok) => { release = ok; });
    let reached!: () => void;
    const atLast = new Promise<void>((ok) => { reached = ok; });
    const taken: number[] = [];
    const s = startReplay(source, 0, async (f) => {
      if (f.i === 1) { reached(); await held; }
      taken.push(f.i);
    }, { clock: new FakeClock() });
    await atLast;
    // The last frame is with the consumer: every frame is handed over, the replay is not done.
    expect(s.status()).toEqual({ state: 'playing', speed: 0, position: 2, total: 2 });
    expect(taken).toEqual([0]);
    release();
    await s.done;
    expect(taken).toEqual([0, 1]);
    expect(s.status()).toEqual({ state: 'done', speed: 0, position: 2, total: 2 });
  });

  it('rejects when the consumer fails', async () => {
    const archive = await openArchive(dir);
    const s = startReplay(archive, 0, async () => { throw new Error('store full'); }, { clock: new FakeClock() });
    await expect(s.done).rejects.toThrow('store full');
  });
});
