// A monitor stopped right after a pair of frames too far apart to give a sample, then started again:
// the compute worker is primed with the frames of the older pair the footpoint table was made on
// (server/stages/computeFrames.ts, core/analysisMemory.ts), so the footpoints keep their ids and
// spin budgets as in the run without the stop.
import { describe, expect, it } from 'vitest';
import type { FootpointAnalysis } from '../../core/footpoints/analyseFootpoints.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { WireFootpoint } from '../../core/wire/footpointWire.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { frameBody, getJson, postFrame, startMonitor, tempDir, waitIdle } from './support.js';

describe('a restart right after a pair too far apart', () => {
  it('the footpoints go on with their ids and spin budgets', async () => {
    const d = demoRegion({ frames: 12, cadenceS: 240, storyH: 12 * 240 / 3600, storyStartH: 14, withVelocity: false, size: 96 });
    const t0 = d.frameAt(0).time;
    // 40 min between frames 6 and 7: more than the 1800 s a velocity is inferred across.
    const frames = Array.from({ length: 12 }, (_, i) => ({ ...d.frameAt(i), time: t0 + i * 240e3 + (i >= 7 ? 2400e3 : 0) }));
    let state: AnalysisState = {};
    let last: FootpointAnalysis | undefined;
    for (const f of frames) { const a = analyseFrame(f, state, {}); state = a.state; last = a.footpoints ?? last; }
    const expected = last!.footpoints.map((r) => [r.id, r.spinBudget]);

    const dataDir = tempDir();
    const first = await startMonitor({ dataDir });
    for (const f of frames.slice(0, 8)) expect((await postFrame(first.url, 'gap', frameBody(f))).status).toBe(201);
    await waitIdle(first.url, 120_000);
    await first.close();
    const second = await startMonitor({ dataDir });
    try {
      for (const f of frames.slice(8)) expect((await postFrame(second.url, 'gap', frameBody(f))).status).toBe(201);
      await waitIdle(second.url, 120_000);
      const list = await getJson<{ frames: { frame_id: number }[] }>(second.url, '/api/regions/gap/frames');
      const lastId = list.frames.at(-1)!.frame_id;
      const got = await getJson<{ footpoints: WireFootpoint[] }>(second.url, `/api/regions/gap/frames/${lastId}/footpoints`);
      expect(got.footpoints.length).toBeGreaterThan(0);
      const budgets = got.footpoints.map((f) => [f.id, f.spin_budget]);
      expect(budgets.map(([id]) => id)).toEqual(expected.map(([id]) => id));
      budgets.forEach(([, b], k) => {
        const want = expected[k][1] as number;
        expect(Math.abs((b as number) - want)).toBeLessThanOrEqual(1e-9 * Math.abs(want) + 1e20);
      });
      expect(expected.some(([, b]) => Math.abs(b as number) > 1e36)).toBe(true);
    } finally {
      await second.stop();
    }
  }, 240_000);
});
