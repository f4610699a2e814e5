// Replays into the live monitor (server/regionReplay.ts, server/replayRegistry.ts).
// Sources of the expectations:
// - "same samples as the batch": replay/processCommand.ts (processFolder) over the same folder is
//   the reference; both run core analyseFrame and core/budget.ts, so rates and budgets agree to
//   1e-9 relative (rounding only).
// - the controls: docs/api.md (POST /api/regions/:region/replay) and the seek rules written at the
//   top of server/regionReplay.ts: seeking back re-sends stored frames, counted as duplicates;
//   seeking forward skips frames, and the budget marks a gap (core/budget.ts: an interval longer
//   than 3 median cadences).
// - a stored region replayed with other settings: the replayed region's samples carry the new
//   settings (noise_g is the given noiseG, the rate's sigma grows with it) at the same times, and
//   the original region's series, frames and settings are byte-for-byte what they were.
// - exports: the CSV header is the batch CSV's (both core/seriesColumns.ts); the maps FITS passes
//   fitsverify (Debian's fitsverify, when installed) and its BN image is the frame's bn in float32.
// Frames: the demo region written by `synth` (replay/synthCommand.ts), 48^2, 12-min cadence.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { readFitsImages } from '../../core/fits/readImage.js';
import { SERIES_COLUMNS } from '../../core/seriesColumns.js';
import { loadFrameFile } from '../../replay/frameFiles.js';
import { openArchive } from '../../replay/archiveSource.js';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { TOKEN, getJson, startMonitor, tempDir, waitIdle } from './support.js';
import type { TestMonitor } from './support.js';

interface Row { time: string; frame_id?: number; noise_g: number | null; sigma_rate_total: number | null; velocity_method: string; flags: string[]; [k: string]: unknown }
interface ReplayInfo { state: string; speed: number; position: number; total: number; sent: number; duplicates: number; skipped_late: number }
interface RegionInfo { name: string; frames: number; duplicates: number; settings: { analysis: Record<string, unknown> }; replay: ReplayInfo | null }

const COMPARED = ['rate_total', 'rate_spin', 'rate_orbit', 'rate_background', 'budget_total', 'budget_spin', 'budget_orbit'] as const;

function expectSameSamples(replayed: Row[], batch: Row[]): void {
  expect(replayed.length).toBe(batch.length);
  expect(replayed.length).toBeGreaterThan(5);
  replayed.forEach((r, i) => {
    const b = batch[i];
    expect(r.time).toBe(b.time);
    expect(r.velocity_method).toBe(b.velocity_method);
    for (const k of COMPARED) {
      const x = r[k] as number, y = b[k] as number;
      expect(Math.abs(x - y), `${k} at ${r.time}: ${x} vs ${y}`).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(y), 1e-300));
    }
  });
}

const control = (url: string, region: string, body: unknown, token: string | null = TOKEN) => fetch(`${url}/api/regions/${region}/replay`, {
  method: 'POST', headers: { 'content-type': 'application/json', ...(token && { authorization: `Bearer ${token}` }) }, body: JSON.stringify(body),
});

async function regionInfo(url: string, name: string): Promise<RegionInfo> {
  const r = (await getJson<{ regions: RegionInfo[] }>(url, '/api/regions')).regions.find((x) => x.name === name);
  if (!r) throw new Error(`no region ${name}`);
  return r;
}

async function until<T>(what: string, f: () => Promise<T | undefined>, timeoutMs = 20_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const v = await f().catch(() => undefined);
    if (v !== undefined) return v;
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

async function replayDone(m: TestMonitor, region: string): Promise<void> {
  await until(`${region} replay done`, async () => ((await regionInfo(m.url, region)).replay?.state === 'done' ? true : undefined), 60_000);
  await waitIdle(m.url);
}

const series = async (m: TestMonitor, region: string) => (await getJson<{ samples: Row[]; gaps: { from: string; to: string }[] }>(m.url, `/api/regions/${region}/series`));

describe('replay into the live monitor', () => {
  let root: string;
  let given: string, inferred: string;
  let batchGiven: Row[], batchInferred: Row[];
  let m: TestMonitor;

  beforeAll(async () => {
    root = tempDir('helicord-replay-');
    given = join(root, 'given');
    inferred = join(root, 'inferred');
    const quiet = { write: () => true } as unknown as NodeJS.WritableStream;
    // 24 frames from the build-up (8-12.6 h of the story), where the rates are large.
    const demo = { storyH: 72, storyStartH: 8, cadenceS: 720 };
    await synth({ out: given, frames: 24, size: 48, withVelocity: true, demo, progress: quiet });
    await synth({ out: inferred, frames: 20, size: 48, withVelocity: false, demo, progress: quiet });
    await processFolder({ folder: given, out: join(root, 'given.csv'), json: join(root, 'given.json'), workers: 1, progress: quiet });
    await processFolder({ folder: inferred, out: join(root, 'inferred.csv'), json: join(root, 'inferred.json'), workers: 1, progress: quiet });
    batchGiven = (JSON.parse(readFileSync(join(root, 'given.json'), 'utf8')) as { samples: Row[] }).samples;
    batchInferred = (JSON.parse(readFileSync(join(root, 'inferred.json'), 'utf8')) as { samples: Row[] }).samples;
    m = await startMonitor({
      replays: [
        { region: 'given', from: { archive: await openArchive(given) }, speed: 1e5 },
        { region: 'inferred', from: { archive: await openArchive(inferred) }, speed: 0 },
      ],
      replayRoot: root,
    });
  }, 120_000);

  afterAll(async () => {
    await m?.stop();
    if (root) rmSync(root, { recursive: true, force: true });
  });

  it('gives the samples of a batch run over the same folder (given velocities, speed 1e5)', async () => {
    await replayDone(m, 'given');
    const info = await regionInfo(m.url, 'given');
    expect(info.replay).toMatchObject({ state: 'done', position: 24, total: 24, sent: 24, duplicates: 0 });
    expect(info.frames).toBe(24);
    expect(batchGiven[0].velocity_method).toBe('given');
    expectSameSamples((await series(m, 'given')).samples, batchGiven);
  }, 60_000);

  it('gives the samples of a batch run with inferred velocities (speed 0)', async () => {
    await replayDone(m, 'inferred');
    expect(batchInferred[0].velocity_method).not.toBe('given');
    expectSameSamples((await series(m, 'inferred')).samples, batchInferred);
  }, 60_000);

  it('replays a stored region with another noise level into a new region, leaving the original untouched', async () => {
    await replayDone(m, 'given');
    const before = { series: await series(m, 'given'), frames: await getJson(m.url, '/api/regions/given/frames'), info: await regionInfo(m.url, 'given') };
    expect((await control(m.url, 'noisy', { action: 'start', from_region: 'given', speed: 0, settings: { analysis: { noiseG: 40 } } }, null)).status).toBe(401);
    const started = await control(m.url, 'noisy', { action: 'start', from_region: 'given', speed: 0, settings: { analysis: { noiseG: 40 } } });
    expect(started.status).toBe(201);
    expect(((await started.json()) as { replay: ReplayInfo }).replay.total).toBe(24);
    await replayDone(m, 'noisy');
    const noisy = (await series(m, 'noisy')).samples;
    const original = before.series.samples;
    expect(noisy.map((s) => s.time)).toEqual(original.map((s) => s.time));
    expect((await regionInfo(m.url, 'noisy')).settings.analysis).toEqual({ noiseG: 40 });
    // What the noise setting changes: the noise used and the uncertainty from it.
    for (let i = 0; i < noisy.length; i++) {
      expect(noisy[i].noise_g).toBe(40);
      expect(original[i].noise_g).not.toBe(40);
      expect(noisy[i].sigma_rate_total!).toBeGreaterThan(original[i].sigma_rate_total! * 1.5);
    }
    // The original: same series, frames and settings as before.
    expect(await series(m, 'given')).toEqual(before.series);
    expect(await getJson(m.url, '/api/regions/given/frames')).toEqual(before.frames);
    const after = await regionInfo(m.url, 'given');
    expect(after.frames).toBe(before.info.frames);
    expect(after.settings).toEqual(before.info.settings);
  }, 60_000);

  it('refuses replay starts that would touch paths or regions it should not', async () => {
    const start = async (region: string, body: Record<string, unknown>) => {
      const r = await control(m.url, region, { action: 'start', ...body });
      return { status: r.status, body: (await r.json()) as { field: string; problem: string } };
    };
    expect(await start('x1', { from_region: 'nosuch' })).toMatchObject({ status: 404, body: { field: 'from_region' } });
    expect(await start('given', { from_region: 'given' })).toMatchObject({ status: 409, body: { field: 'region' } });
    expect(await start('x2', { folder: '/etc' })).toMatchObject({ status: 400, body: { field: 'folder' } });
    expect(await start('x3', { folder: '../..' })).toMatchObject({ status: 400, body: { field: 'folder', problem: 'must stay inside the replay root' } });
    expect(await start('x4', { folder: 'given/../../' })).toMatchObject({ status: 400, body: { field: 'folder' } });
    expect(await start('x5', { from_region: 'given', folder: 'given' })).toMatchObject({ status: 400 });
    expect(await start('x6', { from_region: '../given' })).toMatchObject({ status: 400, body: { field: 'from_region' } });
    expect(await start('given', { from_region: 'inferred', settings: { analysis: { noiseG: 3 } } })).toMatchObject({ status: 409, body: { field: 'region' } });
    expect(await start('x7', { from_region: 'given', settings: { nonsense: 1 } })).toMatchObject({ status: 400, body: { field: 'nonsense' } });
    // None of these made a region.
    const names = (await getJson<{ regions: { name: string }[] }>(m.url, '/api/regions')).regions.map((r) => r.name);
    for (const n of ['x1', 'x2', 'x3', 'x4', 'x5', 'x6', 'x7']) expect(names).not.toContain(n);
    // A folder under the root is allowed.
    const ok = await start('fromfolder', { folder: 'given', speed: 0 });
    expect(ok.status).toBe(201);
    await replayDone(m, 'fromfolder');
    expectSameSamples((await series(m, 'fromfolder')).samples, batchGiven);
  }, 60_000);

  it('exports the replayed series as the batch writes it, and a frame\'s maps as FITS', async () => {
    await replayDone(m, 'given');
    const csv = await (await fetch(`${m.url}/api/regions/given/export.csv`)).text();
    const batchCsv = readFileSync(join(root, 'given.csv'), 'utf8');
    const head = (t: string) => t.split('\n')[0];
    expect(head(csv)).toBe(head(batchCsv));
    expect(head(csv).split(',')).toEqual([...SERIES_COLUMNS]);
    expect(csv.trim().split('\n')).toHaveLength(batchCsv.trim().split('\n').length);
    const json = await getJson<{ columns: string[]; samples: Row[] }>(m.url, '/api/regions/given/export.json');
    expect(json.columns).toEqual([...SERIES_COLUMNS]);
    expect(json.samples).toEqual((await series(m, 'given')).samples);

    const frames = (await getJson<{ frames: { frame_id: number; time: string }[] }>(m.url, '/api/regions/given/frames')).frames;
    const r = await fetch(`${m.url}/api/regions/given/frames/${frames[5].frame_id}/maps.fits`);
    expect(r.status).toBe(200);
    const bytes = new Uint8Array(await r.arrayBuffer());
    const images = readFitsImages(bytes, 'maps.fits');
    expect(images.map((i) => i.name)).toEqual(['BN', 'GTHETA', 'LABELS', 'VX', 'VY']);
    const archive = await openArchive(given);
    const want = await loadFrameFile(archive.entries[5].file);
    expect(new Date(want.time).toISOString()).toBe(frames[5].time);
    const bn = images[0].values;
    for (let i = 0; i < want.bn.length; i += 97) expect(bn[i]).toBe(Math.fround(want.bn[i]));
    const tool = ['/usr/bin/fitsverify', '/usr/local/bin/fitsverify'].find((p) => existsSync(p));
    if (!tool) { console.warn('fitsverify is not installed: the FITS check is skipped'); return; }
    const file = join(root, 'maps.fits');
    writeFileSync(file, bytes);
    expect(execFileSync(tool, [file], { encoding: 'utf8' })).toMatch(/\*\*\*\* Verification found 0 warning\(s\) and 0 error\(s\). \*\*\*\*/);
  }, 60_000);

  it('pauses, resumes, seeks back and forward and changes speed through the API, as documented', async () => {
    // About one frame every 150 ms: 720 s of archive per 0.15 s.
    const started = await control(m.url, 'steered', { action: 'start', from_region: 'given', speed: 4800 });
    expect(started.status).toBe(201);
    await until('3 frames', async () => ((await regionInfo(m.url, 'steered')).frames >= 3 ? true : undefined));
    const paused = await control(m.url, 'steered', { action: 'pause' });
    expect(paused.status).toBe(200);
    const p1 = ((await paused.json()) as { replay: ReplayInfo }).replay;
    expect(p1.state).toBe('paused');
    await waitIdle(m.url);
    // A viewer connected now (nothing flows) hears of the next control at once.
    const viewer = new WebSocket(`${m.url.replace('http', 'ws')}/ws/view?region=steered`);
    const heard: { type: string; status?: { replay: ReplayInfo | null } }[] = [];
    viewer.on('message', (d) => heard.push(JSON.parse(d.toString())));
    await new Promise((r) => viewer.once('open', r));
    await until('the snapshot', async () => (heard.length > 0 ? true : undefined));
    const n1 = (await regionInfo(m.url, 'steered')).frames;
    expect(n1).toBe(p1.position); // every frame handed out is stored, none after the pause
    // Nothing flows while paused, judged against a replay of the same frames at the same speed
    // started beside it (not after a fixed sleep, which a slow machine makes vacuous): while that
    // one stores three frames (two intervals of its pace), the paused one stores none.
    expect((await control(m.url, 'pace', { action: 'start', from_region: 'given', speed: 4800 })).status).toBe(201);
    await until('three frames of a replay running beside the paused one', async () => ((await regionInfo(m.url, 'pace')).frames >= 3 ? true : undefined));
    expect((await control(m.url, 'pace', { action: 'pause' })).status).toBe(200);
    expect((await regionInfo(m.url, 'steered')).frames).toBe(n1); // nothing flows while paused
    expect(heard.filter((h) => h.type === 'frame')).toEqual([]);
    expect((await regionInfo(m.url, 'steered')).replay!.state).toBe('paused');

    // Seek back while paused: the position moves, the state stays.
    const back = ((await (await control(m.url, 'steered', { action: 'seek', value: 0 })).json()) as { replay: ReplayInfo }).replay;
    expect(back).toMatchObject({ state: 'paused', position: 0 });
    await until('a status with the seek', async () => (heard.some((h) => h.type === 'status' && h.status?.replay?.position === 0) ? true : undefined), 5000);
    viewer.close();
    await control(m.url, 'steered', { action: 'resume' });
    // Frames 0..n1-1 are sent again (duplicates, stored once), then play goes on into new ones.
    await until('two new frames after the seek back', async () => ((await regionInfo(m.url, 'steered')).frames >= n1 + 2 ? true : undefined));
    const p2 = ((await (await control(m.url, 'steered', { action: 'pause' })).json()) as { replay: ReplayInfo }).replay;
    await waitIdle(m.url);
    const info2 = await regionInfo(m.url, 'steered');
    expect(info2.duplicates).toBe(n1);
    expect(info2.replay!.duplicates).toBe(n1);
    expect(info2.frames).toBe(p2.position);

    // Seek forward by 6 frames (72 min > 3 cadences of 12 min), then as fast as possible.
    const ahead = p2.position + 6;
    expect(((await (await control(m.url, 'steered', { action: 'seek', value: ahead })).json()) as { replay: ReplayInfo }).replay.position).toBe(ahead);
    const fast = ((await (await control(m.url, 'steered', { action: 'speed', value: 0 })).json()) as { replay: ReplayInfo }).replay;
    expect(fast).toMatchObject({ speed: 0, state: 'paused' });
    await control(m.url, 'steered', { action: 'resume' });
    await replayDone(m, 'steered');
    const info3 = await regionInfo(m.url, 'steered');
    expect(info3.frames).toBe(24 - 6);
    expect(info3.replay).toMatchObject({ state: 'done', position: 24, sent: 18 });
    const s = await series(m, 'steered');
    const frames = (await getJson<{ frames: { time: string }[] }>(m.url, '/api/regions/steered/frames')).frames.map((f) => f.time);
    const before = frames[p2.position - 1], after = frames[p2.position];
    expect(s.gaps.map((g) => [g.from, g.to])).toEqual([[before, after]]);
    // The budget holds its value across the gap (core/budget.ts, not bridged by default).
    const k = s.samples.findIndex((x) => x.time === after);
    expect(k).toBeGreaterThan(0);
    expect(s.samples[k].budget_total).toBe(s.samples[k - 1].budget_total);
    expect(s.samples[k + 1].budget_total).not.toBe(s.samples[k].budget_total);
    const orig = (await series(m, 'given')).samples;
    expect(s.samples.length).toBe(orig.length - 6);

    // Bad values are refused and change nothing; a seek after the end plays again from there.
    expect((await control(m.url, 'steered', { action: 'seek', value: 99 })).status).toBe(400);
    expect((await control(m.url, 'steered', { action: 'seek', value: 'yesterday' })).status).toBe(400);
    expect((await control(m.url, 'steered', { action: 'speed', value: -2 })).status).toBe(400);
    expect((await control(m.url, 'steered', { action: 'jump' })).status).toBe(400);
    const again = await control(m.url, 'steered', { action: 'seek', value: frames[frames.length - 3] });
    expect(again.status).toBe(200);
    await replayDone(m, 'steered');
    const info4 = await regionInfo(m.url, 'steered');
    expect(info4.frames).toBe(18);
    expect(info4.duplicates).toBe(n1 + 3);
    // A region that has frames is never a new replay's target through the API.
    expect((await control(m.url, 'given', { action: 'start', from_region: 'inferred' })).status).toBe(409);
    expect((await regionInfo(m.url, 'given')).frames).toBe(24);
  }, 60_000);
});
