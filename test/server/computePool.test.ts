// The compute pool: region affinity keeps a region's state in one worker; a worker that dies is
// replaced and the region's state is rebuilt from the frames before it and the analysis memory
// stored with the last one, so the next sample and the footpoints (ids, spin budgets) equal those
// of an uninterrupted run (frames without velocity: the sample depends on the earlier frames
// through the inferred velocity and the footpoint motions).
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { Frame } from '../../core/frame.js';
import { ComputePool } from '../../server/computePool.js';
import { encodeFrame } from '../../server/frameBlob.js';
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
    const reference = frames.map((f) => { const r = analyseFrame(f, state); state = r.state; return r; });
    const expected = reference.map((r) => r.sample);
    const memories: unknown[] = [];
    const lines: string[] = [];
    const pool = new ComputePool(2, (l) => lines.push(l));
    try {
      const job = (i: number) => ({
        region: 'ar', frameId: i + 1, framePath: paths[i], settings: {}, mapsPath: join(dir, 'm', `${i}.hlcm`),
        ...(i > 0 && { previous: { id: i, frames: () => ({ frames: paths.slice(0, i), memory: memories[i - 1] }) } }),
      });
      const keep = <T extends { ok: boolean }>(r: T, i: number) => { memories[i] = (r as { memory?: unknown }).memory; return r; };
      const r0 = keep(await pool.analyse(job(0)), 0);
      expect(r0.ok && r0.waiting).toMatch(/no velocity/);
      const r1 = keep(await pool.analyse(job(1)), 1);
      expect(r1.ok && r1.sample).toEqual(expected[1]);
      // Kill the region's worker (the pool's private slot, reached for the test).
      const slots = (pool as unknown as { slots: { worker: { terminate(): Promise<number> } }[]; affinity: Map<string, number> });
      await slots.slots[slots.affinity.get('ar')!].worker.terminate();
      const deadline = Date.now() + 20_000;
      while (!lines.some((l) => /starting a new one/.test(l))) {
        if (Date.now() > deadline) throw new Error(`no replacement worker within 20 s; log: ${lines.join(' | ')}`);
        await new Promise((r) => setTimeout(r, 10));
      }
      const r2 = await pool.analyse(job(2));
      expect(r2.ok && r2.sample).toEqual(expected[2]);
      // What a restart without the memory would change: the footpoints' ids and spin budgets.
      const rows = (r: unknown) => ((r as { footpoints?: { footpoints?: { id: number; spinBudget: number | null }[] } }).footpoints?.footpoints ?? [])
        .map((f) => [f.id, f.spinBudget]);
      expect(rows(r2).length).toBeGreaterThan(0);
      expect(rows(r2)).toEqual(reference[2].footpoints!.footpoints.map((f) => [f.id, f.spinBudget]));
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
