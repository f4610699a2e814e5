// The compute workers' warm-up (server/analysisWarmUp.ts): it runs the real analysis over both
// kinds of synthetic sequence, each from an empty state and its own cache; it stops between two
// frames when asked; and a pool that warmed up gives the same samples as the analysis in this
// thread (the warm-up leaves nothing behind in a region's state).
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../core/frame.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { FrameCache } from '../../core/frameTasks.js';
import { WARM_UP_FRAMES, WARM_UP_GIVEN, WARM_UP_INFERRED, WARM_UP_SIZE, warmUpAnalysis, warmUpSequences } from '../../server/analysisWarmUp.js';
import { ComputePool } from '../../server/computePool.js';
import { encodeFrame } from '../../server/frameBlob.js';
import { circlingFrame, irregularTimes, tempDir } from './support.js';

describe('analysis warm-up', () => {
  it('analyses the inferred-velocity sequence, then the given-velocity one, each from scratch', async () => {
    const seen: { frame: Frame; state: AnalysisState; cache: FrameCache }[] = [];
    const frames = await warmUpAnalysis(async (frame, state, cache) => {
      seen.push({ frame, state, cache });
      return { ...analyseFrame(frame, state, {}, cache).state };
    }, () => false);
    expect(frames).toBe(WARM_UP_FRAMES);
    expect(seen.map((s) => s.frame.nx)).toEqual(new Array(frames).fill(WARM_UP_SIZE));
    expect(seen.map((s) => s.frame.vx !== undefined)).toEqual([...new Array(WARM_UP_INFERRED).fill(false), ...new Array(WARM_UP_GIVEN).fill(true)]);
    // Each sequence starts from an empty state with a cache of its own; within one, state flows on.
    expect(seen[0].state).toEqual({});
    expect(seen[WARM_UP_INFERRED].state).toEqual({});
    expect(seen[1].state).not.toEqual({});
    expect(seen[WARM_UP_INFERRED].cache).not.toBe(seen[0].cache);
    expect(seen[1].cache).toBe(seen[0].cache);
    // The warm-up takes the paths a campaign takes: velocity inferred between the pair and a
    // label split with several footpoints (else it would leave most of the analysis cold).
    const last = analyseFrame(seen[WARM_UP_INFERRED - 1].frame, seen[WARM_UP_INFERRED - 1].state);
    expect(last.sample?.velocityMethod).not.toBe('given');
    expect(last.sample?.splitMethod).toBe('labels');
    expect(last.footpoints!.footpoints.length).toBeGreaterThanOrEqual(4);
  });

  it('stops between two frames when asked, and ends quietly on an error', async () => {
    let calls = 0;
    const stopped = await warmUpAnalysis(async (_f, state) => { calls++; return state; }, () => calls >= 4);
    expect([stopped, calls]).toEqual([4, 4]);
    const failed = await warmUpAnalysis(async () => { throw new Error('no'); }, () => false);
    expect(failed).toBe(0);
    expect(warmUpSequences().map((s) => s.length)).toEqual([WARM_UP_INFERRED, WARM_UP_GIVEN]);
  });

  it('a warmed-up pool gives the samples of the analysis here; a request stops the warm-up early', async () => {
    const dir = tempDir();
    const frames = irregularTimes(3).map((t) => ({ ...circlingFrame(t), vx: undefined, vy: undefined, labels: undefined }));
    mkdirSync(join(dir, 'f'), { recursive: true });
    const paths = frames.map((f, i) => { const p = join(dir, 'f', `${i}.hlcm`); writeFileSync(p, encodeFrame(f)); return p; });
    let state = {};
    const expected = frames.map((f) => { const r = analyseFrame(f, state); state = r.state; return r.sample; });
    const job = (i: number) => ({
      region: 'ar', frameId: i + 1, framePath: paths[i], settings: {}, mapsPath: join(dir, 'm', `${i}.hlcm`),
      ...(i > 0 && { previous: { id: i, frames: () => ({ frames: paths.slice(0, i) }) } }),
    });
    const run = async (waitForWarmUp: boolean) => {
      const lines: string[] = [];
      const pool = new ComputePool(1, (l) => lines.push(l), false, true);
      try {
        expect(pool.warmingUp).toBe(1);
        const deadline = Date.now() + 50_000;
        while (waitForWarmUp && pool.warmingUp > 0) {
          if (Date.now() > deadline) throw new Error('still warming up after 50 s');
          await new Promise((r) => setTimeout(r, 20));
        }
        const samples = [];
        for (let i = 0; i < frames.length; i++) {
          const r = await pool.analyse(job(i));
          samples.push(r.ok ? r.sample : r.error);
        }
        while (pool.warmingUp > 0) await new Promise((r) => setTimeout(r, 20));
        const done = lines.map((l) => new RegExp(`warmed up on (\\d+) synthetic frames|warm-up ended after (\\d+) of ${WARM_UP_FRAMES} synthetic frames`).exec(l)).find((m) => m);
        return { samples, warmUpFrames: Number(done?.[1] ?? done?.[2]) };
      } finally {
        await pool.close();
      }
    };
    try {
      const warm = await run(true);
      expect(warm.warmUpFrames).toBe(WARM_UP_FRAMES);
      expect(warm.samples).toEqual(expected);
      const early = await run(false);
      expect(early.warmUpFrames).toBeLessThan(WARM_UP_FRAMES);
      expect(early.samples).toEqual(expected);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
