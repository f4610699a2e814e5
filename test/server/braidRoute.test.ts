// The braid route (GET /api/regions/:region/braid, server/braidViews.ts): the golden protocol of
// Boyland, Aref & Stremler (2000) as B-only frames of Gaussian spots with 8 G noise sent to the
// monitor gives the braid of the same frames folded here through core (analyseFrame, then the braid
// fold), and after a frame is removed, the fold of the frames that remain: the route is a view of
// what is stored.
import { describe, expect, it } from 'vitest';
import type { FootpointAnalysis } from '../../core/footpoints/analyseFootpoints.js';
import { emptyBraidHistory, extendBraidHistory } from '../../core/braid/braidHistory.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { exchangeFrames, GOLDEN, GOLDEN_ENTROPY } from '../core/braidProtocols.js';
import { sceneFrame } from '../footpoints/scene.js';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { processFolder } from '../../replay/processCommand.js';
import { ensureCompiledWorker } from '../replay/compiledWorker.js';
import { TOKEN, frameBody, getJson, postFrame, startMonitor, tempDir, waitIdle } from './support.js';

const grid = { nx: 64, ny: 64, dx: 0.36, dy: 0.36 };
const SPACING = 4;
const frames: Frame[] = exchangeFrames(3, GOLDEN, 3, { spacing: SPACING, rest: 2 }).map((p, f) => sceneFrame(grid, p.time,
  Array.from(p.x, (x, k) => ({ x: 11.5 - SPACING + x, y: 11.5 + p.y[k], a: 0.8, b: 0.8, angle: 0, peak: 1500 })), 8, 1000 + f));

/** The braid of `kept` frames folded in this process: the monitor's worker takes the same per-frame step. */
function localRun(kept: readonly Frame[]) {
  let state: AnalysisState = {};
  const cache: FluxKernelCache = new Map();
  const tables: { key: number; footpoints: Pick<FootpointAnalysis, 'time' | 'footpoints' | 'events'> }[] = [];
  kept.forEach((frame, k) => {
    const a = analyseFrame(frame, state, {}, cache);
    state = a.state;
    if (a.footpoints) tables.push({ key: k, footpoints: a.footpoints });
  });
  return extendBraidHistory(emptyBraidHistory<number>(), tables);
}

interface BraidAnswer {
  series: { frame_id: number; time: string; braid_entropy_rate: number | null; braid_entropy_rate_run: number | null; braid_strands: number | null; braid_flagged_triples: number | null }[];
  last: { run: { entropy: number; segments: number }; window: { triples: { flagged: boolean }[] } | null } | null;
}

describe('the braid route', () => {
  it('equals the braid folded over the same frames; after a frame is removed, the fold of the frames that remain', async () => {
    // Folded here first: the monitor runs in this process, and a long computation between two
    // requests would let its keep-alive timer close the socket the next request is sent on.
    const gone = 20;
    const local = localRun(frames);
    const localAfter = localRun(frames.filter((_, k) => k !== gone));
    const m = await startMonitor();
    try {
      const ids: number[] = [];
      for (const f of frames) {
        const r = await postFrame(m.url, 'braid', frameBody(f));
        expect(r.status).toBe(201);
        ids.push(r.body.frame_id as number);
      }
      await waitIdle(m.url, 120_000);
      const got = await getJson<BraidAnswer>(m.url, '/api/regions/braid/braid');
      expect(local.last!.run.entropy).toBeGreaterThan(0.95 * 3 * GOLDEN_ENTROPY);
      expect(got.last!.run.entropy).toBeCloseTo(local.last!.run.entropy, 9);
      expect(got.last!.run.segments).toBe(local.last!.run.segments);
      expect(got.series).toHaveLength(local.reports.size);
      const lastRow = got.series[got.series.length - 1];
      expect(lastRow.braid_strands).toBe(3);
      expect(lastRow.braid_entropy_rate_run).toBeCloseTo(local.last!.run.ratePerHour!, 9);

      // A frame in the middle of the second period removed: the braid is that of the others.
      const del = await fetch(`${m.url}/api/regions/braid/frames/${ids[gone]}`, { method: 'DELETE', headers: { authorization: `Bearer ${TOKEN}` } });
      expect(del.status).toBe(200);
      await waitIdle(m.url, 120_000);
      const after = await getJson<BraidAnswer>(m.url, '/api/regions/braid/braid');
      expect(after.last!.run.entropy).toBeCloseTo(localAfter.last!.run.entropy, 9);
      expect(after.series).toHaveLength(localAfter.reports.size);
      expect(after.series.some((r) => r.frame_id === ids[gone])).toBe(false);
    } finally {
      await m.stop();
    }
  }, 240_000);

  it('the monitor\'s series rows carry the braid columns process writes for the same frames', async () => {
    await ensureCompiledWorker();
    const dir = tempDir();
    const folder = join(dir, 'frames');
    mkdirSync(folder);
    frames.forEach((f, k) => writeFileSync(join(folder, `f${String(k).padStart(3, '0')}.json`), frameBody(f)));
    const silent = new Writable({ write: (_c, _e, done) => done() });
    await processFolder({ folder, out: join(dir, 'series.csv'), workers: 1, progress: silent });
    const csv = readFileSync(join(dir, 'series.csv'), 'utf8').trim().split('\n');
    const cols = csv[0].split(',');
    const batch = csv.slice(1).map((line) => Object.fromEntries(line.split(',').map((v, i) => [cols[i], v])));
    const m = await startMonitor();
    try {
      for (const f of frames) expect((await postFrame(m.url, 'braid', frameBody(f))).status).toBe(201);
      await waitIdle(m.url, 120_000);
      const live = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/braid/export.json')).samples;
      expect(live).toHaveLength(batch.length);
      let compared = 0;
      live.forEach((row, i) => {
        expect(row.time).toBe(batch[i].time);
        for (const k of ['braid_entropy_rate', 'braid_entropy_rate_run', 'braid_strands', 'braid_flagged_triples'] as const) {
          const want = batch[i][k] === '' ? null : Number(batch[i][k]);
          const got = row[k] ?? null;
          if (want === null) { expect(got).toBeNull(); continue; }
          expect(got).toBeCloseTo(want, 9);
          compared++;
        }
      });
      expect(compared).toBeGreaterThan(3 * batch.length);
    } finally {
      await m.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  }, 240_000);

  it('answers 404 for a region that does not exist, and an empty braid for a region without footpoints', async () => {
    const m = await startMonitor();
    try {
      const r = await fetch(`${m.url}/api/regions/nowhere/braid`);
      expect(r.status).toBe(404);
      await fetch(`${m.url}/api/regions/quiet/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{}' });
      const empty = await getJson<BraidAnswer>(m.url, '/api/regions/quiet/braid');
      expect(empty.series).toEqual([]);
      expect(empty.last).toBeNull();
    } finally {
      await m.stop();
    }
  });
});
