// The monitor under hostile requests (loopback only): each case is one way a sender, a page on
// another site or a bad frame could change what is stored, take the server's memory or poison a
// region, and the answer it must get instead.
import { createServer, request } from 'node:http';
import type { AddressInfo } from 'node:net';
import { statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import type { Frame } from '../../core/frame.js';
import { frameToFits } from '../../core/frameAssembly/frameToFits.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { TestMonitor } from './support.js';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, postFrame, startMonitor, until, waitIdle } from './support.js';

const auth = { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' };

async function putSettings(url: string, region: string, settings: unknown): Promise<void> {
  const r = await fetch(`${url}/api/regions/${region}/settings`, { method: 'PUT', headers: auth, body: JSON.stringify(settings) });
  expect(r.status).toBe(200);
}

/** A raw HTTP request with any Host and headers (fetch does not let a caller set Host). */
function rawRequest(url: string, opts: { method?: string; path: string; headers?: Record<string, string>; body?: string }): Promise<{ status: number; headers: Record<string, unknown>; body: string }> {
  const u = new URL(url);
  return new Promise((resolve, reject) => {
    const req = request({ host: u.hostname, port: u.port, method: opts.method ?? 'GET', path: opts.path, headers: opts.headers ?? {} }, (res) => {
      let body = '';
      res.on('data', (d) => (body += d));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
    });
    req.on('error', reject);
    req.setTimeout(10_000, () => req.destroy(new Error(`no answer to ${opts.method ?? 'GET'} ${opts.path} in 10 s`)));
    req.end(opts.body);
  });
}

/** Opens a WebSocket and resolves with how the server answered the upgrade. */
function tryUpgrade(url: string, headers: Record<string, string> = {}): Promise<{ open: boolean; status?: number; ws?: WebSocket }> {
  return new Promise((resolve) => {
    const ws = new WebSocket(url, { headers });
    ws.once('open', () => resolve({ open: true, ws }));
    ws.once('unexpected-response', (_req, res) => { resolve({ open: false, status: res.statusCode }); res.resume(); });
    ws.once('error', () => resolve({ open: false }));
  });
}

interface Snapshot { samples: SeriesRow[]; frames: unknown[]; refusals: unknown[]; alerts: unknown; regions: string[] }

async function snapshot(url: string, region: string): Promise<Snapshot> {
  await waitIdle(url);
  return {
    samples: (await getJson<{ samples: SeriesRow[] }>(url, `/api/regions/${region}/series`)).samples,
    frames: (await getJson<{ frames: unknown[] }>(url, `/api/regions/${region}/frames`)).frames,
    refusals: (await getJson<{ refusals: unknown[] }>(url, `/api/regions/${region}/refusals`)).refusals,
    alerts: (await getJson<{ alerts: unknown[] }>(url, `/api/regions/${region}/alerts`)).alerts,
    regions: (await getJson<{ regions: { name: string }[] }>(url, '/api/regions')).regions.map((r) => r.name),
  };
}

describe('requests without a valid token change nothing stored', () => {
  let m: TestMonitor;
  let hook: ReturnType<typeof createServer>;
  let hookCalls = 0;

  beforeAll(async () => {
    hook = createServer((req, res) => { hookCalls++; req.resume(); res.end('ok'); });
    await new Promise<void>((r) => hook.listen(0, '127.0.0.1', () => r()));
    m = await startMonitor();
    const hookUrl = `http://127.0.0.1:${(hook.address() as AddressInfo).port}/`;
    await putSettings(m.url, 'ar', { watchFolder: false, webhookUrl: hookUrl, rules: { refusals: { threshold: 3 } } });
    for (const t of irregularTimes(3)) expect((await postFrame(m.url, 'ar', frameBody(circlingFrame(t)))).status).toBe(201);
  });
  afterAll(async () => { await m?.stop(); hook?.close(); });

  it('50 of them, any region name, also from a page of another site: 401 each, no refusal row, no alert, no webhook; counted in memory, logged once', async () => {
    const before = await snapshot(m.url, 'ar');
    const linesBefore = m.lines.length;
    const body = frameBody(circlingFrame(Date.UTC(2026, 2, 14, 9)));
    let n = 0;
    for (let i = 0; i < 20; i++) {
      const r = await postFrame(m.url, i % 2 ? 'ar' : `made-up-${i}`, body, { token: i % 3 ? 'wrong' : null });
      expect(r.status).toBe(401);
      n++;
    }
    for (let i = 0; i < 10; i++) {
      // A page on another site posting to the loopback port: refused before anything else.
      const r = await rawRequest(m.url, { method: 'POST', path: '/api/regions/ar/frames', headers: { host: new URL(m.url).host, origin: 'http://evil.example', 'content-type': 'application/json' }, body });
      expect(r.status).toBe(403);
    }
    for (let i = 0; i < 10; i++) {
      const u = await tryUpgrade(`${m.url.replace('http', 'ws')}/ws/ingest?region=${i % 2 ? 'ar' : `other${i}`}&token=nope`);
      expect(u.open).toBe(false);
      expect(u.status).toBe(401);
      n++;
    }
    for (let i = 0; i < 10; i++) {
      const r = await fetch(`${m.url}/api/regions/ar/alerts/refusals/ack`, { method: 'POST' });
      expect(r.status).toBe(401);
      n++;
    }
    const after = await snapshot(m.url, 'ar');
    expect(after).toEqual(before);
    expect(hookCalls).toBe(0);
    const health = await getJson<{ unauthorized: number }>(m.url, '/api/health');
    expect(health.unauthorized).toBe(n);
    const notes = m.lines.slice(linesBefore).filter((l) => /without a valid token/.test(l));
    expect(notes.length).toBe(1);
    expect(m.lines.slice(linesBefore).filter((l) => /^refused/.test(l))).toHaveLength(0);
  });
});

describe('host names and origins (DNS rebinding, pages of other sites)', () => {
  let m: TestMonitor;
  beforeAll(async () => {
    m = await startMonitor({ allowedHosts: ['helicord.lab'] });
    await putSettings(m.url, 'ar', { watchFolder: false });
  });
  afterAll(async () => { await m?.stop(); });

  it('a Host that is not a loopback or configured name gets 403 on every route, the page included', async () => {
    const port = new URL(m.url).port;
    for (const path of ['/api/regions', '/api/health', '/api/regions/ar/series', '/']) {
      const bad = await rawRequest(m.url, { path, headers: { host: `evil.example:${port}` } });
      expect(bad.status).toBe(403);
      expect(JSON.parse(bad.body).field).toBe('host');
    }
    for (const host of [`127.0.0.1:${port}`, `localhost:${port}`, `[::1]:${port}`, `helicord.lab:${port}`, 'localhost']) {
      expect((await rawRequest(m.url, { path: '/api/regions', headers: { host } })).status).toBe(200);
    }
    expect((await rawRequest(m.url, { path: '/api/regions', headers: { host: `127.0.0.1.evil.example:${port}` } })).status).toBe(403);
  });

  it('the viewer and ingest sockets refuse another Origin and another Host; a same-origin page is accepted', async () => {
    const ws = m.url.replace('http', 'ws');
    const port = new URL(m.url).port;
    expect((await tryUpgrade(`${ws}/ws/view?region=ar`, { origin: 'http://evil.example' })).status).toBe(403);
    expect((await tryUpgrade(`${ws}/ws/ingest?region=ar`, { origin: 'http://evil.example', authorization: `Bearer ${TOKEN}` })).status).toBe(403);
    expect((await tryUpgrade(`${ws}/ws/view?region=ar`, { host: `rebound.example:${port}` })).status).toBe(403);
    for (const origin of [m.url, `http://localhost:${port}`]) {
      const ok = await tryUpgrade(`${ws}/ws/view?region=ar`, { origin });
      expect(ok.open).toBe(true);
      ok.ws!.close();
    }
  });
});

describe('read protection and HEAD; health', () => {
  it('with readToken a HEAD is refused like a GET; health answers without the token and names no region', async () => {
    const m = await startMonitor({ readToken: true });
    try {
      await putSettings(m.url, 'secret-region', { watchFolder: false });
      for (const path of ['/api/regions', '/api/regions/secret-region/series', '/api/regions/secret-region/export.csv']) {
        expect((await fetch(m.url + path, { method: 'HEAD' })).status).toBe(401);
        expect((await fetch(m.url + path, { method: 'HEAD', headers: { authorization: `Bearer ${TOKEN}` } })).status).toBe(200);
      }
      const h = await fetch(`${m.url}/api/health`);
      expect(h.status).toBe(200);
      expect(await h.text()).not.toContain('secret-region');
    } finally {
      await m.stop();
    }
  });
});

describe('one bad frame cannot poison a region', () => {
  let m: TestMonitor;
  const times = irregularTimes(6);
  beforeAll(async () => {
    m = await startMonitor();
    for (const r of ['clean', 'ar']) await putSettings(m.url, r, { watchFolder: false });
    for (const t of times) expect((await postFrame(m.url, 'clean', frameBody(circlingFrame(t)))).status).toBe(201);
    await waitIdle(m.url);
  });
  afterAll(async () => { await m?.stop(); });

  it('a frame dated 9999-12-31 is refused (422, time) and later frames are still taken', async () => {
    const f = circlingFrame(times[0]);
    const r = await postFrame(m.url, 'ar', frameBody({ ...f, time: Date.UTC(9999, 11, 31) }));
    expect(r.status).toBe(422);
    expect(r.body.field).toBe('time');
    expect(String(r.body.problem)).toMatch(/after the monitor's clock, beyond the region's maxAheadS of 600 s/);
    expect((await postFrame(m.url, 'ar', frameBody(circlingFrame(times[0])))).status).toBe(201);
  });

  it('a frame of 1e38 G, of Infinity km/s or of 1e6 Mm pixels is refused (422, naming the map and pixel)', async () => {
    const f = circlingFrame(times[1]);
    const bn = Float64Array.from(f.bn); bn[100] = 1e38;
    const big = await postFrame(m.url, 'ar', frameBody({ ...f, bn }));
    expect(big.status).toBe(422);
    expect(big.body.field).toBe('bn[100]');
    expect(String(big.body.problem)).toMatch(/beyond the physical limit of 100000 G/);
    const vx = Float64Array.from(f.vx!); vx[7] = -5e3;
    expect((await postFrame(m.url, 'ar', frameBody({ ...f, vx }))).body.field).toBe('vx[7]');
    const wide = await postFrame(m.url, 'ar', Buffer.from(frameToFits({ ...f, dx: 1e6, dy: 1e6 })), { type: 'application/fits' });
    expect(wide.status).toBe(422);
    expect(wide.body.field).toBe('dx');
  });

  it('a stored frame removed with the token: the series is recomputed from the other frames and equals the clean run; the same frame again is refused', async () => {
    for (const t of times.slice(1)) expect((await postFrame(m.url, 'ar', frameBody(circlingFrame(t)))).status).toBe(201);
    // A poisoned frame that got in before the limits existed: values far off, but within them.
    const f = circlingFrame(times.at(-1)! + 60_000);
    const bad: Frame = { ...f, bn: f.bn.map((b) => b * 90) };
    const stored = await postFrame(m.url, 'ar', frameBody(bad));
    expect(stored.status).toBe(201);
    await waitIdle(m.url);
    // And one more good frame after it, whose sample is paired with the bad one.
    const after = circlingFrame(times.at(-1)! + 120_000);
    expect((await postFrame(m.url, 'ar', frameBody(after))).status).toBe(201);
    expect((await postFrame(m.url, 'clean', frameBody(after))).status).toBe(201);
    await waitIdle(m.url);
    const id = stored.body.frame_id as number;
    const withBad = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar/series')).samples;
    expect(withBad.length).toBe(times.length + 2);

    const noToken = await fetch(`${m.url}/api/regions/ar/frames/${id}`, { method: 'DELETE' });
    expect(noToken.status).toBe(401);
    const del = await fetch(`${m.url}/api/regions/ar/frames/${id}`, { method: 'DELETE', headers: auth });
    expect(del.status).toBe(200);
    expect(((await del.json()) as { removed: { frame_id: number } }).removed.frame_id).toBe(id);
    await waitIdle(m.url);
    const clean = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/clean/series')).samples;
    const got = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar/series')).samples;
    const strip = (r: SeriesRow) => ({ ...r, frame_id: null });
    expect(got.map(strip)).toEqual(clean.map(strip));
    expect((await fetch(`${m.url}/api/regions/ar/frames/${id}`)).status).toBe(404);
    const again = await postFrame(m.url, 'ar', frameBody(bad));
    expect(again.status).toBe(409);
    expect(String(again.body.problem)).toMatch(/was removed from the region/);
  });
});

describe('small uploads cannot become huge frames', () => {
  it('a few-kB GZIP tile file of 4096^2 pixels is refused (413) before it is decompressed, under the default pixel budget of 2048^2', async () => {
    const m = await startMonitor();
    try {
      await putSettings(m.url, 'big', { watchFolder: false });
      const n = 4096;
      const bn = new Float64Array(n * n);
      bn[0] = 10;
      const bytes = frameToFits({ time: Date.UTC(2026, 2, 14), nx: n, ny: n, dx: 0.36, dy: 0.36, bn }, { compression: { type: 'GZIP_1' } });
      expect(bytes.length).toBeLessThan(2_000_000);
      const r = await postFrame(m.url, 'big', Buffer.from(bytes), { type: 'application/fits' });
      expect(r.status).toBe(413);
      expect(String(r.body.problem)).toMatch(/4096 x 4096 pixels exceeds the limit of 4194304 pixels/);
      expect(await getJson<{ frames: unknown[] }>(m.url, '/api/regions/big/frames')).toEqual({ frames: [] });
    } finally {
      await m.stop();
    }
  });

  it('JSON: nx*ny over the budget is refused before any map is made; a body that needs more than the intake memory bound is refused (413) and the next frame is taken', async () => {
    const m = await startMonitor({ maxFramePixels: 64 * 64, intakeMemoryMb: 64 });
    try {
      await putSettings(m.url, 'j', { watchFolder: false });
      const f = circlingFrame(Date.UTC(2026, 2, 14));
      const wide = await postFrame(m.url, 'j', JSON.stringify({ time: '2026-03-14T06:00:00Z', nx: 65, ny: 64, dx: 0.5, dy: 0.5, bn: [1] }));
      expect(wide.status).toBe(413);
      expect(wide.body.field).toBe('nx');
      // 15 MB of text that parses into 5 million empty arrays: some 200 MB of heap, over 64 MiB.
      const junk = `{"time":"2026-03-14T06:00:00Z","nx":64,"ny":64,"dx":0.5,"dy":0.5,"bn":[${'[],'.repeat(5_000_000)}0]}`;
      const r = await postFrame(m.url, 'j', junk);
      expect(r.status).toBe(413);
      expect(String(r.body.problem)).toMatch(/more memory than the intake worker's bound of 64 MiB/);
      expect((await postFrame(m.url, 'j', frameBody(f))).status).toBe(201);
    } finally {
      await m.stop();
    }
  });
});

describe('backpressure: a region\'s queue is bounded', () => {
  it('HTTP: past the bound the sender gets 503 with Retry-After and nothing is stored; resent later, every frame is taken', async () => {
    const m = await startMonitor({ queueLimit: 2 });
    try {
      await putSettings(m.url, 'q', { watchFolder: false });
      const times = irregularTimes(10);
      const answers = await Promise.all(times.map(async (t) => {
        const r = await fetch(`${m.url}/api/regions/q/frames`, { method: 'POST', headers: auth, body: frameBody(circlingFrame(t)) });
        return { t, status: r.status, retry: r.headers.get('retry-after') };
      }));
      const busy = answers.filter((a) => a.status === 503);
      expect(busy.length).toBeGreaterThan(0);
      for (const a of answers) expect([201, 503]).toContain(a.status);
      for (const a of busy) expect(Number(a.retry)).toBeGreaterThanOrEqual(1);
      const h = await getJson<{ queue_peak: number; queue_limit: number }>(m.url, '/api/health');
      expect(h.queue_limit).toBe(2);
      expect(h.queue_peak).toBeLessThanOrEqual(2);
      for (const a of busy) {
        await until(`the frame held back with 503 at ${new Date(a.t).toISOString()} is taken when sent again`, 30_000, async () => {
          const r = await postFrame(m.url, 'q', frameBody(circlingFrame(a.t)));
          if (r.status !== 201) expect(r.status).toBe(503);
          return r.status === 201;
        }, 50);
      }
      await waitIdle(m.url);
      const frames = (await getJson<{ frames: unknown[] }>(m.url, '/api/regions/q/frames')).frames;
      expect(frames).toHaveLength(times.length);
      const status = (await getJson<{ regions: { name: string }[] }>(m.url, '/api/regions')).regions.map((r) => r.name);
      expect(status).toContain('q');
    } finally {
      await m.stop();
    }
  });

  it('WebSocket: past the bound the socket is paused, not refused; every frame is acknowledged in the end and the queue never passed the bound', async () => {
    const m = await startMonitor({ queueLimit: 2 });
    try {
      await putSettings(m.url, 'qw', { watchFolder: false });
      const times = irregularTimes(10);
      const ws = new WebSocket(`${m.url.replace('http', 'ws')}/ws/ingest?region=qw&token=${TOKEN}`);
      await new Promise((r, j) => { ws.once('open', r); ws.once('error', j); });
      const answers: { type: string; code?: number }[] = [];
      const done = new Promise<void>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`only ${answers.length} of ${times.length} answers in 50 s`)), 50_000);
        ws.on('message', (d) => { answers.push(JSON.parse(d.toString())); if (answers.length === times.length) { clearTimeout(timer); resolve(); } });
      });
      for (const t of times) ws.send(frameBody(circlingFrame(t)));
      await done;
      ws.close();
      expect(answers.map((a) => a.type)).toEqual(Array(times.length).fill('ack'));
      const h = await getJson<{ queue_peak: number }>(m.url, '/api/health');
      // The frames read before the pause took effect may pass it by the few in one read.
      expect(h.queue_peak).toBeLessThanOrEqual(4);
    } finally {
      await m.stop();
    }
  });
});

describe('odds and ends', () => {
  let m: TestMonitor;
  beforeAll(async () => {
    m = await startMonitor({ maxViewers: 5 });
    await putSettings(m.url, 'ar', { watchFolder: false });
    expect((await postFrame(m.url, 'ar', frameBody(circlingFrame(Date.UTC(2026, 2, 14))))).status).toBe(201);
    await waitIdle(m.url);
  });
  afterAll(async () => { await m?.stop(); });

  it('map?layer=toString (an Object.prototype name) is not a layer: 400', async () => {
    const frames = (await getJson<{ frames: { frame_id: number }[] }>(m.url, '/api/regions/ar/frames')).frames;
    for (const layer of ['toString', 'constructor', '__proto__', 'hasOwnProperty']) {
      const r = await fetch(`${m.url}/api/regions/ar/frames/${frames[0].frame_id}/map?layer=${layer}`);
      expect(r.status).toBe(400);
    }
    expect((await fetch(`${m.url}/api/regions/ar/frames/${frames[0].frame_id}/map?layer=bn`)).status).toBe(200);
  });

  it('viewer sockets: none for a made-up region (404), and no more than the bound (503)', async () => {
    const ws = m.url.replace('http', 'ws');
    expect((await tryUpgrade(`${ws}/ws/view?region=made-up-1`)).status).toBe(404);
    const open: WebSocket[] = [];
    for (let i = 0; i < 5; i++) {
      const u = await tryUpgrade(`${ws}/ws/view?region=ar`);
      expect(u.open).toBe(true);
      open.push(u.ws!);
    }
    expect((await tryUpgrade(`${ws}/ws/view?region=ar`)).status).toBe(503);
    for (const s of open) s.close();
  });

  it('the database files are readable by the owner only (0600), like the token', () => {
    for (const f of ['helicord.sqlite', 'helicord.sqlite-wal', 'helicord.sqlite-shm']) {
      expect(statSync(join(m.dataDir, f)).mode & 0o777).toBe(0o600);
    }
  });
});

describe('bodies are checked before anything is written (server/httpApi.ts)', () => {
  it('a bad settings body for a new name makes no region; refusals of a name with neither region nor refusal are 404', async () => {
    const m = await startMonitor();
    try {
      const names = async () => (await getJson<{ regions: { name: string }[] }>(m.url, '/api/regions')).regions.map((r) => r.name);
      const put = (body: string, headers: Record<string, string> = auth) => fetch(`${m.url}/api/regions/fresh/settings`, { method: 'PUT', headers, body });
      const bad = await put(JSON.stringify({ analysis: { method: 'lct' } }));
      expect(bad.status).toBe(400);
      expect(JSON.stringify(await bad.json())).toMatch(/analysis\.method/);
      expect((await put('{"latenessS": ')).status).toBe(400);
      expect((await put('{"latenessS": 600}', { 'content-type': 'application/json' })).status).toBe(401);
      expect(await names()).not.toContain('fresh');
      const unknown = await fetch(`${m.url}/api/regions/fresh/refusals`);
      expect(unknown.status).toBe(404);
      expect(((await unknown.json()) as { field: string }).field).toBe('region');
      // A good body makes the region, with the setting.
      const good = await put('{"latenessS": 600}');
      expect(good.status).toBe(200);
      expect(((await good.json()) as { settings: { latenessS: number } }).settings.latenessS).toBe(600);
      expect(await names()).toContain('fresh');
      expect((await getJson<{ refusals: unknown[] }>(m.url, '/api/regions/fresh/refusals')).refusals).toEqual([]);
      // A name whose only frame was refused is no region, but the sender can read why.
      expect((await postFrame(m.url, 'refusedonly', 'hello', { type: 'text/plain' })).status).toBe(415);
      expect(await names()).not.toContain('refusedonly');
      const why = (await getJson<{ refusals: { status: number; field: string }[] }>(m.url, '/api/regions/refusedonly/refusals')).refusals;
      expect(why.map((r) => [r.status, r.field])).toEqual([[415, 'content-type']]);
    } finally {
      await m.stop();
    }
  });
});
