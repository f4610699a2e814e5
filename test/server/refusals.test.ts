// Every kind of awkward frame gets its documented answer (docs/api.md) and leaves the stored
// state as it was; every refusal is recorded with its reason. Out-of-order frames within the
// lateness are put back in order: the result equals the in-order run exactly.
import { rmSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { TestMonitor } from './support.js';
import { TOKEN, T0, circlingFrame, frameBody, getJson, irregularTimes, postFrame, startMonitor, tempDir, waitIdle } from './support.js';

interface Stored { series: unknown; frames: unknown; alerts: unknown }

async function stored(url: string, region: string): Promise<Stored> {
  await waitIdle(url);
  return {
    series: await getJson(url, `/api/regions/${region}/series`),
    frames: await getJson(url, `/api/regions/${region}/frames`),
    alerts: ((await getJson<{ alerts: { id: string; state: string }[] }>(url, `/api/regions/${region}/alerts`)).alerts)
      .filter((a) => a.id !== 'refusals').map((a) => [a.id, a.state]),
  };
}

describe('refusals and their answers', () => {
  let m: TestMonitor;
  const times = irregularTimes(8);
  const order = [0, 1, 2, 4, 3, 5, 7, 6];

  beforeAll(async () => {
    m = await startMonitor({ bodyLimit: 1_000_000 });
    for (const name of ['inorder', 'shuffled']) {
      await fetch(`${m.url}/api/regions/${name}/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: JSON.stringify({ watchFolder: false }) });
    }
    for (const t of times) expect((await postFrame(m.url, 'inorder', frameBody(circlingFrame(t)))).status).toBe(201);
    // Waiting after frames 4 and 7 makes sure the later frame is processed before the earlier one
    // comes: the region has to rewind (otherwise the pending frames are simply taken in order).
    for (const i of order) {
      expect((await postFrame(m.url, 'shuffled', frameBody(circlingFrame(times[i])))).status).toBe(201);
      if (i === 4 || i === 7) await waitIdle(m.url);
    }
    await waitIdle(m.url);
  });
  afterAll(async () => { await m?.stop(); });

  it('out of order within the lateness: put back in order, the same series as the in-order run', async () => {
    const a = await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/inorder/series');
    const b = await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/shuffled/series');
    expect(b.samples.map((r) => r.time)).toEqual(times.map((t) => new Date(t).toISOString()));
    const strip = (r: SeriesRow) => ({ ...r, frame_id: null });
    expect(b.samples.map(strip)).toEqual(a.samples.map(strip));
    expect(m.lines.filter((l) => /shuffled: a frame came in late; 1 later frame\(s\) are processed again/.test(l))).toHaveLength(2);
  });

  const cases: { name: string; status: number; field: string | RegExp; send: () => Promise<{ status: number; body: Record<string, unknown> }> }[] = [
    { name: 'duplicate (same frame again)', status: 200, field: '', send: () => postFrame(m.url, 'inorder', frameBody(circlingFrame(times[3]))) },
    { name: 'too late (beyond the lateness of 3600 s)', status: 409, field: 'time', send: () => postFrame(m.url, 'inorder', frameBody(circlingFrame(T0 - 2 * 3600_000))) },
    { name: 'malformed JSON', status: 400, field: '(json)', send: () => postFrame(m.url, 'inorder', '{"time": "2026-03-14T06:00:00Z", "nx": 64,') },
    { name: 'oversized body', status: 413, field: '(body)', send: () => postFrame(m.url, 'inorder', Buffer.alloc(1_500_000, 32)) },
    { name: 'wrong token', status: 401, field: 'authorization', send: () => postFrame(m.url, 'inorder', frameBody(circlingFrame(times.at(-1)! + 60_000)), { token: 'nope' }) },
    { name: 'no token', status: 401, field: 'authorization', send: () => postFrame(m.url, 'inorder', frameBody(circlingFrame(times.at(-1)! + 60_000)), { token: null }) },
    {
      name: 'other grid than the region\'s (wrong shape)', status: 409, field: 'grid',
      send: () => { const f = circlingFrame(times.at(-1)! + 60_000); return postFrame(m.url, 'inorder', frameBody({ ...f, nx: 32, ny: 128 })); },
    },
    {
      name: 'map of the wrong length (invalid frame)', status: 422, field: 'vx',
      send: () => { const f = circlingFrame(times.at(-1)! + 60_000); return postFrame(m.url, 'inorder', frameBody({ ...f, vx: f.vx!.subarray(0, 100) })); },
    },
    {
      name: 'another frame at a stored time with different content', status: 409, field: 'time',
      send: () => { const f = circlingFrame(times[2]); return postFrame(m.url, 'inorder', frameBody({ ...f, bn: f.bn.map((v) => v * 1.01) })); },
    },
    { name: 'FITS bytes that are not a FITS file', status: 422, field: /./, send: () => postFrame(m.url, 'inorder', Buffer.alloc(2880, 32), { type: 'application/fits' }) },
    { name: 'unknown content type', status: 415, field: 'content-type', send: () => postFrame(m.url, 'inorder', 'hello', { type: 'text/plain' }) },
    { name: 'a region name that is a path', status: 400, field: 'region', send: () => postFrame(m.url, '..%2F..%2Fetc', frameBody(circlingFrame(times[0]))) },
  ];

  for (const c of cases) {
    it(`${c.name}: ${c.status}, stored state unchanged`, async () => {
      const before = await stored(m.url, 'inorder');
      const refusalsBefore = (await getJson<{ refusals: unknown[] }>(m.url, '/api/regions/inorder/refusals')).refusals.length;
      const r = await c.send();
      expect(r.status).toBe(c.status);
      if (c.status === 200) {
        expect(r.body).toMatchObject({ status: 'duplicate' });
      } else {
        expect(typeof r.body.error).toBe('string');
        expect(typeof r.body.problem).toBe('string');
        if (typeof c.field === 'string') expect(r.body.field).toBe(c.field);
      }
      expect(await stored(m.url, 'inorder')).toEqual(before);
      const refusals = (await getJson<{ refusals: { reason: string; status: number }[] }>(m.url, '/api/regions/inorder/refusals')).refusals;
      // Refusals are recorded (a duplicate is not a refusal; the path-like name has no region;
      // a request without a valid token changes nothing stored, it is only counted in memory).
      const recorded = c.status !== 200 && c.field !== 'region' && c.status !== 401;
      expect(refusals.length).toBe(refusalsBefore + (recorded ? 1 : 0));
      if (recorded) expect(refusals.at(-1)!.status).toBe(c.status);
    });
  }

  it('the duplicate was counted once, and the refusal alert raised after 3 refusals within the hour', async () => {
    const regions = await getJson<{ regions: { name: string; frames: number; duplicates: number }[] }>(m.url, '/api/regions');
    const r = regions.regions.find((x) => x.name === 'inorder')!;
    expect(r.frames).toBe(times.length);
    expect(r.duplicates).toBe(1);
    const { alerts } = await getJson<{ alerts: { id: string; state: string; evidence: { value: number } }[] }>(m.url, '/api/regions/inorder/alerts');
    const a = alerts.find((x) => x.id === 'refusals')!;
    expect(a.state).toBe('raised');
    expect(a.evidence.value).toBeGreaterThanOrEqual(3);
    const refusals = (await getJson<{ refusals: { reason: string }[] }>(m.url, '/api/regions/inorder/refusals')).refusals;
    expect(refusals.some((x) => /too late: .* beyond the region's lateness of 3600 s/.test(x.reason))).toBe(true);
  });

  it('reading needs no token on loopback, but settings changes do', async () => {
    expect((await fetch(`${m.url}/api/regions`)).status).toBe(200);
    const put = await fetch(`${m.url}/api/regions/inorder/settings`, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: '{"latenessS": 10}' });
    expect(put.status).toBe(401);
    const bad = await fetch(`${m.url}/api/regions/inorder/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"dataDir": "/etc"}' });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { field: string }).field).toBe('dataDir');
  });
});

describe('reading protected', () => {
  it('with readToken every read needs the token; health stays open', async () => {
    const m = await startMonitor({ readToken: true });
    try {
      expect((await fetch(`${m.url}/api/regions`)).status).toBe(401);
      expect((await fetch(`${m.url}/api/regions`, { headers: { authorization: `Bearer ${TOKEN}` } })).status).toBe(200);
      expect((await fetch(`${m.url}/api/health`)).status).toBe(200);
    } finally {
      await m.stop();
    }
  });
});

describe('start-up', () => {
  it('a port in use is reported, and the threads are given back', async () => {
    const a = await startMonitor();
    const port = Number(new URL(a.url).port);
    try {
      await expect(startMonitor({ port })).rejects.toThrow(/cannot listen on 127\.0\.0\.1:\d+/);
    } finally {
      await a.stop();
    }
  });

  it('without HELICORD_TOKEN a token is made at first start, stored with mode 0600 and shown once', async () => {
    const { statSync, readFileSync } = await import('node:fs');
    const { join } = await import('node:path');
    const { serve } = await import('../../server/serve.js');
    const saved = process.env.HELICORD_TOKEN;
    delete process.env.HELICORD_TOKEN;
    const dir = tempDir();
    const lines: string[] = [];
    try {
      let m = await serve({ dataDir: dir, port: 0, workers: 1, log: (l) => lines.push(l) });
      await m.close();
      const file = join(dir, 'token');
      expect(statSync(file).mode & 0o777).toBe(0o600);
      const token = readFileSync(file, 'utf8').trim();
      expect(lines.filter((l) => l.includes(token))).toHaveLength(1);
      m = await serve({ dataDir: dir, port: 0, workers: 1, log: (l) => lines.push(l) });
      try {
        expect(lines.filter((l) => l.includes(token))).toHaveLength(1); // not shown again
        const ok = await fetch(`${m.url}/api/regions/x/settings`, { method: 'PUT', headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' }, body: '{}' });
        expect(ok.status).toBe(200);
      } finally {
        await m.close();
      }
    } finally {
      process.env.HELICORD_TOKEN = saved;
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
