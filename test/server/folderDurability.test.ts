// Durability through the watched folder: the monitor runs in its own process and is killed with
// SIGKILL while frames renamed into its inbox (in bursts, in a shuffled order, under names that
// say nothing of their order) are being taken; after each restart it goes on from what it finds.
// In the end every frame is stored once (0 lost, 0 doubled) and the series equals the
// uninterrupted in-order run.
import { mkdirSync, readdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { ChildMonitor } from './support.js';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, launchMonitor, postFrame, shuffled, startMonitor, tempDir, until, waitIdle } from './support.js';

const frameTimes = async (url: string) => (await getJson<{ frames: { time: string }[] }>(url, '/api/regions/ar/frames')).frames.map((f) => f.time);

describe('durability through the watched folder: kill -9 while files are taken, restart, go on', () => {
  it('every frame stored once and the series equal to the uninterrupted run, after 4 kills', async () => {
    const times = irregularTimes(32);
    const bodies = times.map((t) => frameBody(circlingFrame(t)));
    const ref = await startMonitor();
    let expected: SeriesRow[];
    try {
      for (const b of bodies) expect((await postFrame(ref.url, 'ar', b)).status).toBe(201);
      await waitIdle(ref.url, 60_000);
      expected = (await getJson<{ samples: SeriesRow[] }>(ref.url, '/api/regions/ar/series')).samples;
    } finally {
      await ref.stop();
    }

    const dir = tempDir();
    const data = join(dir, 'data');
    const staging = join(dir, 'staging');
    mkdirSync(staging, { recursive: true });
    const names = times.map((_, i) => `m${((i + 7) * 2654435761 % 2 ** 32).toString(16).padStart(8, '0')}.json`);
    bodies.forEach((b, i) => writeFileSync(join(staging, names[i]), b));
    let m: ChildMonitor | undefined;
    const kills: number[] = [];
    try {
      m = await launchMonitor(data);
      const put = await fetch(`${m.url}/api/regions/ar/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"latenessS": 300}' });
      expect(put.status).toBe(200);
      const inbox = join(data, 'inbox', 'ar');
      await until('the inbox exists', 10_000, () => { try { readdirSync(inbox); return true; } catch { return false; } });
      // Four bursts of 8 (each spanning about 10 min, beyond the lateness of 5 min: taken out of
      // order, frames would be refused as too late); a kill in each: when some of the burst are
      // stored, or at once.
      const killWhenStored = [3, 0, 5, 8];
      for (let b = 0; b < 4; b++) {
        const burst = shuffled([...Array(8).keys()].map((k) => b * 8 + k), 100 + b);
        for (const i of burst) renameSync(join(staging, names[i]), join(inbox, names[i]));
        const target = b * 8 + killWhenStored[b];
        const url = m.url;
        // Deadlines sized for CI, where other test files share the 2 cores with the child monitors.
        await until(`${target} frames stored before kill ${b + 1}`, 180_000, async () => (await frameTimes(url)).length >= target);
        await m.kill9();
        kills.push(target);
        m = await launchMonitor(data);
      }
      const url = m.url;
      await until('all 32 frames stored', 180_000, async () => (await frameTimes(url)).length >= times.length);
      await waitIdle(m.url, 180_000);
      const stored = await frameTimes(m.url);
      const got = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar/series')).samples;
      const refusals = (await getJson<{ refusals: unknown[] }>(m.url, '/api/regions/ar/refusals')).refusals;
      // 0 lost, 0 doubled.
      expect(stored).toHaveLength(times.length);
      expect(new Set(stored).size).toBe(times.length);
      expect(refusals).toEqual([]);
      const strip = (r: SeriesRow) => ({ ...r, frame_id: null });
      expect(got.map(strip)).toEqual(expected.map(strip));
      expect(kills).toHaveLength(4);
    } finally {
      if (m?.alive()) await m.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  }, 1_200_000);
});
