// The compute pool: region affinity keeps a region's state in one worker; a worker that dies is
// replaced and the region's state is rebuilt from its last processed frame, so the next sample
// equals the one of an uninterrupted run (frames without velocity: the sample depends on the
// previous frame through the inferred velocity).
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { Frame } from '../../core/frame.js';
import { ComputePool } from '../../server/computePool.js';
import { encodeFrame } from '../../server/mapFile.js';
import { circlingFrame, irregularTimes, tempDir } from './support.js';

const noVelocity = (f: Frame): Frame => ({ ...f, vx: undefined, vy: undefined, labels: undefined });

describe('compute pool', () => {
  it('survives a worker that dies: the replacement rebuilds the state from the last frame', async () => {
    const dir = tempDir();
    const times = irregularTimes(3);
    const frames = times.map((t) => noVelocity(circlingFrame(t)));
    mkdirSync(join(dir, 'f'), { recursive: true });
    const paths = frames.map((f, i) => { const p = join(dir, 'f', `${i}.hlcm`); writeFileSync(p, encodeFrame(f)); return p; });
    // The uninterrupted reference, in this thread.
    let state = {};
    const expected = frames.map((f) => { const r = analyseFrame(f, state); state = r.state; return r.sample; });
    const lines: string[] = [];
    const pool = new ComputePool(2, (l) => lines.push(l));
    try {
      const job = (i: number) => ({
        region: 'ar', frameId: i + 1, framePath: paths[i], settings: {}, mapsPath: join(dir, 'm', `${i}.hlcm`),
        ...(i > 0 && { previous: { id: i, path: paths[i - 1] } }),
      });
      const r0 = await pool.analyse(job(0));
      expect(r0.ok && r0.waiting).toMatch(/no velocity/);
      const r1 = await pool.analyse(job(1));
      expect(r1.ok && r1.sample).toEqual(expected[1]);
      // Kill the region's worker (the pool's private slot, reached for the test).
      const slots = (pool as unknown as { slots: { worker: { terminate(): Promise<number> } }[]; affinity: Map<string, number> });
      await slots.slots[slots.affinity.get('ar')!].worker.terminate();
      while (!lines.some((l) => /starting a new one/.test(l))) await new Promise((r) => setTimeout(r, 10));
      const r2 = await pool.analyse(job(2));
      expect(r2.ok && r2.sample).toEqual(expected[2]);
      // Affinity: the region stayed on its slot; a second region goes to the other one.
      expect(slots.affinity.get('ar')).toBe(0);
      await pool.analyse({ ...job(0), region: 'other' });
      expect(slots.affinity.get('other')).toBe(1);
    } finally {
      await pool.close();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
