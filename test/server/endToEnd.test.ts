// End to end on loopback: a scripted sequence with known injection posted over HTTP, then read
// back through the API and the viewer socket. The truth: two compact footpoints
// circling each other at Omega inject dH/dt = -(1/pi) Phi1 Phi2 Omega (Berger & Field 1984;
// the core's own check of this scene holds it to 1%, test/core/analyticTruths.test.ts).
import { writeFileSync, mkdirSync, renameSync } from 'node:fs';
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { frameToFits } from '../../core/frameAssembly/frameToFits.js';
import { SERIES_COLUMNS } from '../../core/seriesColumns.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { labelFlux } from '../support/scenes.js';
import type { TestMonitor } from './support.js';
import { OMEGA, T0, TOKEN, circlingFrame, frameBody, getJson, irregularTimes, opened, postFrame, socketMessages, startMonitor, until, waitIdle } from './support.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('end to end: circling pair posted over HTTP', () => {
  let m: TestMonitor;
  const times = irregularTimes(12);
  const f0 = circlingFrame(T0);
  const expectedRate = (-1 / Math.PI) * labelFlux(f0, 1) * labelFlux(f0, 2) * OMEGA;
  let viewer: WebSocket;
  const live: { type: string; [k: string]: unknown }[] = [];

  beforeAll(async () => {
    m = await startMonitor();
    // A viewer connected before the first frame: snapshot first, then live messages.
    await fetch(`${m.url}/api/regions/ar1/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: JSON.stringify({ watchFolder: false }) });
    viewer = new WebSocket(`${m.url.replace('http', 'ws')}/ws/view?region=ar1`);
    viewer.on('message', (d) => live.push(JSON.parse(d.toString())));
    await opened(viewer, 'the viewer of ar1');
    for (const t of times) {
      const r = await postFrame(m.url, 'ar1', frameBody(circlingFrame(t)));
      expect(r.status).toBe(201);
      expect(r.body.status).toBe('stored');
    }
    await waitIdle(m.url);
  });

  afterAll(async () => {
    viewer?.close();
    await m?.stop();
  });

  it('stores one sample per frame whose rate matches -(1/pi) Phi1 Phi2 Omega within 1%', async () => {
    const s = await getJson<{ samples: SeriesRow[]; gaps: unknown[] }>(m.url, '/api/regions/ar1/series');
    expect(s.samples).toHaveLength(times.length);
    expect(s.gaps).toEqual([]);
    for (const row of s.samples) {
      expect(rel(row.rate_total, expectedRate)).toBeLessThan(0.01);
      // G_A integrates to the same total (Pariat, Demoulin & Berger 2005: swap identity).
      expect(rel(row.rate_total_ga, row.rate_total)).toBeLessThan(1e-9);
      // The exact split (labels given): spin + orbit + background = total; the pair's motion is orbit.
      expect(rel(row.rate_spin + row.rate_orbit + row.rate_background, row.rate_total)).toBeLessThan(1e-9);
      expect(Math.abs(row.rate_spin) / Math.abs(row.rate_total)).toBeLessThan(0.01);
      expect(row.split_method).toBe('labels');
      expect(row.velocity_method).toBe('given');
      expect(row.rate_emergence).toBeNull();
    }
    expect(s.samples.map((r) => Date.parse(r.time))).toEqual(times);
  });

  it('the budget is the trapezoid integral of the stored rates and matches the analytic rate times the span within 1%', async () => {
    const s = await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar1/series');
    let b = 0;
    for (let i = 1; i < s.samples.length; i++) {
      const dt = (Date.parse(s.samples[i].time) - Date.parse(s.samples[i - 1].time)) / 1000;
      b += 0.5 * (s.samples[i].rate_total + s.samples[i - 1].rate_total) * dt;
      expect(rel(s.samples[i].budget_total, b)).toBeLessThan(1e-12);
    }
    const last = s.samples.at(-1)!;
    expect(rel(last.budget_total, expectedRate * (times.at(-1)! - T0) / 1000)).toBeLessThan(0.01);
    expect(rel(last.budget_orbit + last.budget_spin + last.budget_background, last.budget_total)).toBeLessThan(1e-9);
  });

  it('a time range selects samples', async () => {
    const from = new Date(times[3]).toISOString(), to = new Date(times[6]).toISOString();
    const s = await getJson<{ samples: SeriesRow[] }>(m.url, `/api/regions/ar1/series?from=${from}&to=${to}`);
    expect(s.samples.map((r) => r.time)).toEqual(times.slice(3, 7).map((t) => new Date(t).toISOString()));
    const bad = await fetch(`${m.url}/api/regions/ar1/series?from=yesterday`);
    expect(bad.status).toBe(400);
  });

  it('the viewer got a snapshot, then a frame, sample and status message per frame', () => {
    expect(live[0].type).toBe('snapshot');
    const samples = live.filter((x) => x.type === 'sample').map((x) => x.sample as SeriesRow);
    expect(samples).toHaveLength(times.length);
    expect(live.filter((x) => x.type === 'frame')).toHaveLength(times.length);
    expect(samples.at(-1)!.budget_total).toBeLessThan(0);
  });

  it('a new viewer gets the stored samples in its snapshot, and backfill on request', async () => {
    const ws = new WebSocket(`${m.url.replace('http', 'ws')}/ws/view?region=ar1`);
    const messages = socketMessages<{ type: string; samples?: SeriesRow[]; alerts?: unknown[]; latest_frame?: { frame_id: number } }>(ws);
    await opened(ws, 'a new viewer of ar1');
    ws.send(JSON.stringify({ type: 'backfill', since: new Date(times[9]).toISOString() }));
    const got = await messages.atLeast(2, 'the snapshot and the backfill');
    ws.close();
    expect(got[0].type).toBe('snapshot');
    expect(got[0].samples).toHaveLength(times.length);
    expect(got[0].alerts!.length).toBeGreaterThan(0);
    expect(got[1].type).toBe('backfill');
    expect(got[1].samples!.map((r) => r.time)).toEqual(times.slice(9).map((t) => new Date(t).toISOString()));
  });

  it('the region list, frame list, maps and CSV export', async () => {
    const regions = await getJson<{ regions: { name: string; frames: number; last_sample_time: string; settings: { watchFolder: boolean } }[] }>(m.url, '/api/regions');
    const r = regions.regions.find((x) => x.name === 'ar1')!;
    expect(r.frames).toBe(times.length);
    expect(r.last_sample_time).toBe(new Date(times.at(-1)!).toISOString());
    expect(r.settings.watchFolder).toBe(false);
    const frames = await getJson<{ frames: { frame_id: number; nx: number }[] }>(m.url, '/api/regions/ar1/frames');
    expect(frames.frames).toHaveLength(times.length);
    const id = frames.frames[0].frame_id;
    const map = await getJson<{ nx: number; ny: number; data: string; encoding: string; unit: string }>(m.url, `/api/regions/ar1/frames/${id}/map?layer=bn`);
    const values = new Float32Array(new Uint8Array(Buffer.from(map.data, 'base64')).buffer);
    expect(values.length).toBe(64 * 64);
    const f = circlingFrame(T0);
    let maxDiff = 0;
    for (let i = 0; i < values.length; i++) maxDiff = Math.max(maxDiff, Math.abs(values[i] - f.bn[i]));
    expect(maxDiff).toBeLessThan(1e-3); // float32 of values up to 1000 G
    // The analysis found the two footpoints; their orbit partner is each other.
    const fp = await getJson<{ footpoints: { id: number; polarity: number; flux: number; partners: { id: number; orbit: number }[]; omega_method: string }[]; tracks: Record<string, number[][]> }>(m.url, `/api/regions/ar1/frames/${frames.frames.at(-1)!.frame_id}/footpoints`);
    expect(fp.footpoints).toHaveLength(2);
    expect(fp.footpoints.every((x) => x.polarity === 1)).toBe(true);
    expect(fp.footpoints[0].partners[0].id).toBe(fp.footpoints[1].id);
    expect(Object.values(fp.tracks).every((t) => t.length === times.length)).toBe(true);
    const gt = await getJson<{ unit: string }>(m.url, `/api/regions/ar1/frames/${id}/map?layer=gtheta`);
    expect(gt.unit).toBe('Mx^2 cm^-2 s^-1');
    expect((await fetch(`${m.url}/api/regions/ar1/frames/${id}/map?layer=../../etc`)).status).toBe(400);
    expect((await fetch(`${m.url}/api/regions/ar1/frames/99999/map`)).status).toBe(404);
    const fits = await fetch(`${m.url}/api/regions/ar1/frames/${id}/maps.fits`);
    expect(fits.status).toBe(200);
    expect(Buffer.from(await fits.arrayBuffer()).subarray(0, 30).toString('latin1')).toMatch(/^SIMPLE  =\s+T/);
    const csv = await (await fetch(`${m.url}/api/regions/ar1/export.csv`)).text();
    const lines = csv.trim().split('\n');
    expect(lines[0].split(',')).toEqual([...SERIES_COLUMNS]);
    expect(lines[0]).toMatch(/^time,dt_s,rate_total,rate_spin,rate_orbit,rate_background,budget_total,budget_spin,budget_orbit/);
    expect(lines).toHaveLength(times.length + 1);
  });

  it('frames also arrive over the ingest socket and the watched folder', async () => {
    const t1 = times.at(-1)! + 80_000, t2 = t1 + 80_000;
    const ws = new WebSocket(`${m.url.replace('http', 'ws')}/ws/ingest?region=ar1&token=${TOKEN}`);
    const messages = socketMessages(ws);
    await opened(ws, 'the ingest socket of ar1');
    ws.send(frameBody(circlingFrame(t1)));
    ws.send(frameBody(circlingFrame(t1))); // again: a duplicate
    ws.send('{"time": 1}');
    const answers = await messages.atLeast(3, 'the answers to three ingest messages');
    ws.close();
    expect(answers[0]).toMatchObject({ type: 'ack', status: 'stored' });
    expect(answers[1]).toMatchObject({ type: 'ack', status: 'duplicate', frame_id: answers[0].frame_id });
    expect(answers[2]).toMatchObject({ type: 'refused', field: 'nx' });
    // The watched folder of a new region (on by default): a file written there is ingested.
    await fetch(`${m.url}/api/regions/ar2/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{}' });
    const inbox = join(m.dataDir, 'inbox', 'ar2');
    mkdirSync(inbox, { recursive: true });
    writeFileSync(join(inbox, '.f.tmp'), frameBody(circlingFrame(t2)));
    renameSync(join(inbox, '.f.tmp'), join(inbox, 'frame-0001.json'));
    let n = 0;
    await until('a sample of the frame written to the inbox of ar2', 10_000, async () => {
      n = (await getJson<{ samples: unknown[] }>(m.url, '/api/regions/ar2/series')).samples.length;
      return n > 0;
    }, 50);
    expect(n).toBe(1);
    const frames = await getJson<{ frames: { source: string }[] }>(m.url, '/api/regions/ar2/frames');
    expect(frames.frames[0].source).toBe('inbox/ar2/frame-0001.json');
    await waitIdle(m.url);
    expect((await getJson<{ samples: unknown[] }>(m.url, '/api/regions/ar1/series')).samples).toHaveLength(times.length + 1);
  });
});

describe('the demo region', () => {
  it('streams live from the demo generator, and its replay can be paused and resumed with the token', async () => {
    const m = await startMonitor({ demo: true, demoIntervalMs: 50 });
    try {
      let n = 0;
      await until('three samples of the demo region', 30_000, async () => {
        const regions = await getJson<{ regions: { name: string }[] }>(m.url, '/api/regions');
        if (regions.regions.some((r) => r.name === 'demo')) n = (await getJson<{ samples: unknown[] }>(m.url, '/api/regions/demo/series')).samples.length;
        return n >= 3;
      }, 50);
      expect(n).toBeGreaterThanOrEqual(3);
      const control = (body: unknown, token: string | null = TOKEN, region = 'demo') => fetch(`${m.url}/api/regions/${region}/replay`, {
        method: 'POST', headers: { 'content-type': 'application/json', ...(token && { authorization: `Bearer ${token}` }) }, body: JSON.stringify(body),
      });
      expect((await control({ action: 'pause' }, null)).status).toBe(401);
      const paused = await control({ action: 'pause' });
      expect(paused.status).toBe(200);
      expect(((await paused.json()) as { replay: { state: string } }).replay.state).toBe('paused');
      await waitIdle(m.url);
      const a = (await getJson<{ regions: { name: string; frames: number; replay: { state: string; total: number } }[] }>(m.url, '/api/regions')).regions.find((r) => r.name === 'demo')!;
      expect(a.replay.state).toBe('paused');
      expect(a.replay.total).toBeGreaterThan(a.frames);
      // Nothing streams while paused, judged against a replay of the demo's stored frames at the
      // demo's pace (one frame per 50 ms) started beside it, not after a fixed sleep that a slow
      // machine makes vacuous: while that one stores three frames, the demo stores none.
      const demoTimes = (await getJson<{ frames: { time: string }[] }>(m.url, '/api/regions/demo/frames')).frames.map((f) => Date.parse(f.time));
      const speed = (demoTimes[1] - demoTimes[0]) / 50; // archive ms per 50 wall ms
      const pace = await control({ action: 'start', from_region: 'demo', speed }, TOKEN, 'pace');
      expect(pace.status).toBe(201);
      await until('three frames of a replay running beside the paused demo', 30_000, async () =>
        ((await getJson<{ regions: { name: string; frames: number }[] }>(m.url, '/api/regions')).regions.find((r) => r.name === 'pace')?.frames ?? 0) >= 3);
      expect((await control({ action: 'pause' }, TOKEN, 'pace')).status).toBe(200);
      const b = (await getJson<{ regions: { name: string; frames: number; replay: { state: string } }[] }>(m.url, '/api/regions')).regions.find((r) => r.name === 'demo')!;
      expect(b.frames).toBe(a.frames); // nothing streams while paused
      expect(b.replay.state).toBe('paused');
      expect((await control({ action: 'speed', value: -1 })).status).toBe(400);
      expect((await control({ action: 'resume' })).status).toBe(200);
      expect((await fetch(`${m.url}/api/regions/nodemo/replay`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}` } })).status).toBe(404);
    } finally {
      await m.stop();
    }
  });
});

describe('gaps in the stream', () => {
  it('are marked in the series, not integrated across unless bridging is set, and raise the data-gap rule', async () => {
    const m = await startMonitor();
    try {
      const t = [0, 60, 120, 180, 240, 300, 1300, 1360, 1420, 2500].map((s) => T0 + s * 1000);
      for (const x of t.slice(0, 8)) expect((await postFrame(m.url, 'gappy', frameBody(circlingFrame(x)))).status).toBe(201);
      await waitIdle(m.url);
      // From here on gaps are bridged (an explicit, recorded setting).
      const put = await fetch(`${m.url}/api/regions/gappy/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: JSON.stringify({ budget: { bridgeGaps: true } }) });
      expect(put.status).toBe(200);
      for (const x of t.slice(8)) expect((await postFrame(m.url, 'gappy', frameBody(circlingFrame(x)))).status).toBe(201);
      await waitIdle(m.url);
      const s = await getJson<{ samples: SeriesRow[]; gaps: { from: string; to: string; bridged: boolean }[] }>(m.url, '/api/regions/gappy/series');
      expect(s.gaps).toEqual([
        { from: new Date(t[5]).toISOString(), to: new Date(t[6]).toISOString(), bridged: false },
        { from: new Date(t[8]).toISOString(), to: new Date(t[9]).toISOString(), bridged: true },
      ]);
      const r = s.samples.map((x) => x.rate_total);
      const trap = (i: number) => 0.5 * (r[i] + r[i - 1]) * (t[i] - t[i - 1]) / 1000;
      // The first row after each gap is flagged, as in the batch CSV (core/accumulate.ts).
      expect(s.samples.map((x) => x.flags.includes('after-gap'))).toEqual([false, false, false, false, false, false, true, false, false, true]);
      // Not bridged: the budget holds over the first gap.
      expect(s.samples[6].budget_total).toBe(s.samples[5].budget_total);
      // Bridged: the second gap is integrated.
      expect(rel(s.samples[9].budget_total - s.samples[8].budget_total, trap(9))).toBeLessThan(1e-12);
      const { alerts } = await getJson<{ alerts: { id: string; history: { to: string; evidence: { value: number } }[] }[] }>(m.url, '/api/regions/gappy/alerts');
      const gap = alerts.find((a) => a.id === 'data-gap')!;
      expect(gap.history[0].to).toBe('rising');
      expect(gap.history[1].to).toBe('raised');
      expect(gap.history[1].evidence.value).toBe(1000);
    } finally {
      await m.stop();
    }
  });
});

describe('FITS frames over HTTP and WebSocket (our frame file convention, docs/fits.md)', () => {
  it('are stored and computed like JSON frames; the rate matches the analytic one within 1%', async () => {
    const m = await startMonitor();
    try {
      const times = irregularTimes(3);
      const r0 = await postFrame(m.url, 'fitsar', Buffer.from(frameToFits(circlingFrame(times[0]))), { type: 'application/fits' });
      expect(r0.status).toBe(201);
      const ws = new WebSocket(`${m.url.replace('http', 'ws')}/ws/ingest?region=fitsar`, { headers: { authorization: `Bearer ${TOKEN}` } });
      const messages = socketMessages(ws);
      await opened(ws, 'the ingest socket of fitsar');
      ws.send(Buffer.from(frameToFits(circlingFrame(times[1]))), { binary: true });
      ws.send(Buffer.from(frameToFits(circlingFrame(times[2]))), { binary: true });
      const answers = await messages.atLeast(2, 'the answers to two FITS frames over the ingest socket');
      ws.close();
      expect(answers.map((a) => a.status)).toEqual(['stored', 'stored']);
      await waitIdle(m.url);
      const s = await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/fitsar/series');
      expect(s.samples).toHaveLength(3);
      const f0 = circlingFrame(T0);
      const expectedRate = (-1 / Math.PI) * labelFlux(f0, 1) * labelFlux(f0, 2) * OMEGA;
      for (const row of s.samples) {
        expect(rel(row.rate_total, expectedRate)).toBeLessThan(0.01);
      }
    } finally {
      await m.stop();
    }
  });
});

describe('alerts end to end: rule raised on the stream, webhook called, acknowledgement', () => {
  it('a low rate threshold is crossed by the circling pair; the webhook gets the raise', async () => {
    const hooks: Record<string, unknown>[] = [];
    const hook = createServer((req, res) => {
      let body = '';
      req.on('data', (c) => (body += c));
      req.on('end', () => { hooks.push(JSON.parse(body)); res.end('ok'); });
    });
    await new Promise<void>((r) => hook.listen(0, '127.0.0.1', r));
    const hookUrl = `http://127.0.0.1:${(hook.address() as AddressInfo).port}/hook`;
    const m = await startMonitor();
    try {
      const put = await fetch(`${m.url}/api/regions/ar3/settings`, {
        method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' },
        // The pair injects about -2.4e32 Mx^2/s: a threshold of 1e32 (ours, for the test) is crossed.
        body: JSON.stringify({ webhookUrl: hookUrl, rules: { 'peak-rate': { threshold: 1e32 } } }),
      });
      expect(put.status).toBe(200);
      const badPut = await fetch(`${m.url}/api/regions/ar3/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: JSON.stringify({ rules: { 'peak-rate': { threshold: 'high' } } }) });
      expect(badPut.status).toBe(400);
      expect(((await badPut.json()) as { field: string }).field).toBe('rules.peak-rate.threshold');
      for (const t of irregularTimes(4)) expect((await postFrame(m.url, 'ar3', frameBody(circlingFrame(t)))).status).toBe(201);
      await waitIdle(m.url);
      const { alerts } = await getJson<{ alerts: { id: string; state: string; history: { to: string }[]; acknowledged: boolean; source: string; threshold: number }[] }>(m.url, '/api/regions/ar3/alerts');
      const a = alerts.find((x) => x.id === 'peak-rate')!;
      expect(a.state).toBe('raised');
      expect(a.threshold).toBe(1e32);
      expect(a.source).toMatch(/LaBonte/);
      expect(a.history.map((h) => h.to)).toEqual(['rising', 'raised']);
      expect(alerts.find((x) => x.id === 'budget')!.state).toBe('quiet');
      await until('the webhook is called', 5000, () => hooks.length > 0, 20);
      expect(hooks[0]).toMatchObject({ type: 'alert', region: 'ar3', rule: 'peak-rate', from: 'rising', to: 'raised' });
      expect((await fetch(`${m.url}/api/regions/ar3/alerts/peak-rate/ack`, { method: 'POST' })).status).toBe(401);
      const ack = await fetch(`${m.url}/api/regions/ar3/alerts/peak-rate/ack`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}` } });
      expect(ack.status).toBe(200);
      expect(((await ack.json()) as { acknowledged: boolean }).acknowledged).toBe(true);
      const after = await getJson<{ alerts: { id: string; acknowledged: boolean }[] }>(m.url, '/api/regions/ar3/alerts');
      expect(after.alerts.find((x) => x.id === 'peak-rate')!.acknowledged).toBe(true);
    } finally {
      await m.stop();
      hook.close();
    }
  });
});
