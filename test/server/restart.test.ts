// Frames without velocity: the analysis infers it between consecutive frames and the sample sits
// at the mid-time. After a restart the worker state is rebuilt from the last stored frame, so the
// first frame after the restart pairs with it: the series equals the uninterrupted run's.
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../core/frame.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { circlingFrame, frameBody, getJson, irregularTimes, postFrame, startMonitor, tempDir, waitIdle } from './support.js';

const noVelocity = (f: Frame): Frame => ({ ...f, vx: undefined, vy: undefined, labels: undefined });

describe('restart with inferred velocities', () => {
  it('pairs the first frame after a restart with the last one before it', async () => {
    const times = irregularTimes(6);
    const bodies = times.map((t) => frameBody(noVelocity(circlingFrame(t))));
    const ref = await startMonitor();
    for (const b of bodies) expect((await postFrame(ref.url, 'ar', b)).status).toBe(201);
    await waitIdle(ref.url);
    const expected = (await getJson<{ samples: SeriesRow[] }>(ref.url, '/api/regions/ar/series')).samples;
    await ref.stop();
    // One sample per frame pair, at the mid-time, with the interval.
    expect(expected).toHaveLength(times.length - 1);
    expect(expected.map((r) => Date.parse(r.time))).toEqual(times.slice(1).map((t, i) => (t + times[i]) / 2));
    expect(expected.map((r) => r.dt_s)).toEqual(times.slice(1).map((t, i) => (t - times[i]) / 1000));
    expect(expected.every((r) => r.velocity_method !== 'given')).toBe(true);

    const dir = tempDir();
    const first = await startMonitor({ dataDir: dir });
    for (const b of bodies.slice(0, 3)) expect((await postFrame(first.url, 'ar', b)).status).toBe(201);
    await waitIdle(first.url);
    await first.close();
    const second = await startMonitor({ dataDir: dir });
    try {
      for (const b of bodies.slice(3)) expect((await postFrame(second.url, 'ar', b)).status).toBe(201);
      await waitIdle(second.url);
      const got = (await getJson<{ samples: SeriesRow[] }>(second.url, '/api/regions/ar/series')).samples;
      const strip = (r: SeriesRow) => ({ ...r, frame_id: null });
      expect(got.map(strip)).toEqual(expected.map(strip));
    } finally {
      await second.stop();
    }
  });
});
