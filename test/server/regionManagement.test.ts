// Managing regions over HTTP (loopback only): removing one with its files, renaming one (all of
// it goes on under the new name, the series continues as if never renamed), resetting a grid
// fixed by a toy frame, a new inbox folder becoming a region, and the file work of an operation
// interrupted by a stop finished at the next start. Every refusal names its field and leaves
// everything stored as it was.
import { existsSync, mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { Store } from '../../server/store.js';
import type { TestMonitor } from './support.js';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, postFrame, startMonitor, tempDir, until, waitIdle } from './support.js';

const auth = { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' };
const strip = (r: SeriesRow) => ({ ...r, frame_id: null });
const times = irregularTimes(8);

async function call(url: string, method: string, path: string, body?: unknown, token: string | null = TOKEN) {
  const headers: Record<string, string> = { 'content-type': 'application/json' };
  if (token !== null) headers.authorization = `Bearer ${token}`;
  const r = await fetch(url + path, { method, headers, ...(body !== undefined && { body: typeof body === 'string' ? body : JSON.stringify(body) }) });
  return { status: r.status, body: (await r.json()) as Record<string, unknown> };
}

const listing = (dir: string): string[] => {
  if (!existsSync(dir)) return [];
  return readdirSync(dir, { recursive: true, encoding: 'utf8' }).sort();
};

/** Everything stored of a region, as the API and the data folder show it. */
async function state(m: TestMonitor, region: string) {
  await waitIdle(m.url);
  const regions = (await getJson<{ regions: { name: string; settings: unknown; frames: number; duplicates: number }[] }>(m.url, '/api/regions')).regions;
  const row = regions.find((r) => r.name === region);
  const of = async <T>(what: string): Promise<T | null> => (row ? getJson<T>(m.url, `/api/regions/${region}/${what}`) : null);
  return {
    regions: regions.map((r) => r.name),
    row,
    samples: (await of<{ samples: SeriesRow[] }>('series'))?.samples ?? null,
    frames: (await of<{ frames: unknown[] }>('frames'))?.frames ?? null,
    refusals: (await of<{ refusals: unknown[] }>('refusals'))?.refusals ?? null,
    alerts: (await of<{ alerts: unknown[] }>('alerts'))?.alerts ?? null,
    files: ['frames', 'maps', 'inbox'].map((f) => listing(join(m.dataDir, f, region))),
  };
}

/** A viewer socket, open, with a promise of how it is closed. */
async function viewer(url: string, region: string): Promise<{ closed: Promise<{ code: number; reason: string }> }> {
  const ws = new WebSocket(`${url.replace('http', 'ws')}/ws/view?region=${region}`);
  const closed = new Promise<{ code: number; reason: string }>((r) => ws.once('close', (code, reason) => r({ code, reason: reason.toString() })));
  await new Promise<void>((ok, fail) => { ws.once('message', () => ok()); ws.once('error', fail); });
  return { closed };
}

const withDeadline = <T>(what: string, p: Promise<T>, ms = 10_000) =>
  Promise.race([p, new Promise<never>((_, fail) => setTimeout(() => fail(new Error(`${what}: not within ${ms} ms`)), ms).unref())]);

describe('managing regions', () => {
  let m: TestMonitor;
  let expected: SeriesRow[];

  beforeAll(async () => {
    m = await startMonitor();
    // The uninterrupted run the managed regions are compared with.
    for (const t of times) expect((await postFrame(m.url, 'ref', frameBody(circlingFrame(t)))).status).toBe(201);
    await waitIdle(m.url, 60_000);
    expected = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ref/series')).samples;
    expect(expected).toHaveLength(times.length);
  }, 120_000);
  afterAll(async () => {
    expect(m.lines.filter((l) => /internal error|processing stopped/.test(l))).toEqual([]);
    await m?.stop();
  });

  it('removing a region takes its rows and files; refusals change nothing; the name is free again', async () => {
    for (const t of times.slice(0, 3)) expect((await postFrame(m.url, 'gone', frameBody(circlingFrame(t)))).status).toBe(201);
    // A file taken from its inbox, and one refused (another grid) into refused/.
    const inbox = join(m.dataDir, 'inbox', 'gone');
    await until('the inbox of gone exists', 10_000, () => existsSync(inbox));
    writeFileSync(join(inbox, 'd.json'), frameBody(circlingFrame(times[3])));
    await until('d.json is taken', 20_000, async () => (await getJson<{ frames: unknown[] }>(m.url, '/api/regions/gone/frames')).frames.length === 4);
    const before = await state(m, 'gone');
    expect(before.samples).toHaveLength(4);
    expect(before.files[0]).toHaveLength(4); // frames/gone
    expect(before.files[1]).toHaveLength(4); // maps/gone
    expect(before.files[2]).toContain('d.json');

    // Refusals: no token, a name that is no region name, a region that does not exist.
    const noToken = await call(m.url, 'DELETE', '/api/regions/gone', undefined, null);
    expect(noToken.status).toBe(401);
    expect(noToken.body.field).toBe('authorization');
    const wrongToken = await call(m.url, 'DELETE', '/api/regions/gone', undefined, 'not-the-token');
    expect(wrongToken.status).toBe(401);
    const badName = await call(m.url, 'DELETE', '/api/regions/gone.json');
    expect(badName.status).toBe(400);
    expect(badName.body.field).toBe('region');
    const none = await call(m.url, 'DELETE', '/api/regions/never-was');
    expect(none.status).toBe(404);
    expect(none.body.field).toBe('region');
    expect(await state(m, 'gone')).toEqual(before);

    const v = await viewer(m.url, 'gone');
    const r = await call(m.url, 'DELETE', '/api/regions/gone');
    expect(r.status).toBe(200);
    expect(r.body).toEqual({ region: 'gone', removed: { frames: 4, samples: 4, refusals: 0, files: 'removed' } });
    expect(await withDeadline('the viewer is closed', v.closed)).toEqual({ code: 4004, reason: 'region removed' });
    const after = await state(m, 'gone');
    expect(after.regions).not.toContain('gone');
    expect(after.files).toEqual([[], [], []]);
    for (const f of ['frames', 'maps', 'inbox']) expect(existsSync(join(m.dataDir, f, 'gone'))).toBe(false);
    expect((await fetch(`${m.url}/api/regions/gone/series`)).status).toBe(404);
    expect(m.lines.some((l) => l === 'region gone removed: 4 frame(s), 4 sample(s), 0 refusal(s) and its files')).toBe(true);
    // The other regions are untouched.
    expect((await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ref/series')).samples).toEqual(expected);
    // The name is free: a frame sent to it starts a new region from nothing.
    expect((await postFrame(m.url, 'gone', frameBody(circlingFrame(times[5])))).status).toBe(201);
    await waitIdle(m.url);
    const again = await state(m, 'gone');
    expect(again.frames).toHaveLength(1);
    expect(again.refusals).toEqual([]);
    expect(again.samples!.map((s) => [s.time, s.rate_total])).toEqual([[expected[5].time, expected[5].rate_total]]);
  }, 60_000);

  it('renaming a region keeps everything under the new name; a name in use and bad bodies are refused naming the field', async () => {
    await call(m.url, 'PUT', '/api/regions/old/settings', { latenessS: 1234 });
    for (const t of times.slice(0, 4)) expect((await postFrame(m.url, 'old', frameBody(circlingFrame(t)))).status).toBe(201);
    // A refusal on record (another grid) and a file taken from the inbox.
    const toy = { time: new Date(times[4] - 1000).toISOString(), nx: 3, ny: 2, dx: 0.36, dy: 0.36, bn: [12.5, -3.1, null, 140, 220.4, 8.9] };
    expect((await postFrame(m.url, 'old', JSON.stringify(toy))).status).toBe(409);
    const inbox = join(m.dataDir, 'inbox', 'old');
    await until('the inbox of old exists', 10_000, () => existsSync(inbox));
    writeFileSync(join(inbox, 'e.json'), frameBody(circlingFrame(times[4])));
    await until('e.json is taken', 20_000, async () => (await getJson<{ frames: unknown[] }>(m.url, '/api/regions/old/frames')).frames.length === 5);
    expect((await postFrame(m.url, 'other', frameBody(circlingFrame(times[0])))).status).toBe(201);
    const before = await state(m, 'old');
    const otherBefore = await state(m, 'other');
    expect(before.samples!.map(strip)).toEqual(expected.slice(0, 5).map(strip));
    expect(before.refusals).toHaveLength(1);

    const refusals: [unknown, number, string][] = [
      [undefined, 400, 'to'],
      [{}, 400, 'to'],
      ['[1]', 400, '(body)'],
      ['"new"', 400, '(body)'],
      [{ to: '../escape' }, 400, 'to'],
      [{ to: 42 }, 400, 'to'],
      [{ to: 'x'.repeat(65) }, 400, 'to'],
      [{ to: 'fine', also: 1 }, 400, 'also'],
      [{ to: 'old' }, 400, 'to'],
      [{ to: 'other' }, 409, 'to'],
      [{ to: 'ref' }, 409, 'to'],
    ];
    for (const [body, status, field] of refusals) {
      const r = await call(m.url, 'POST', '/api/regions/old/rename', body);
      expect([JSON.stringify(body), r.status, r.body.field]).toEqual([JSON.stringify(body), status, field]);
      expect(typeof r.body.problem).toBe('string');
    }
    expect((await call(m.url, 'POST', '/api/regions/old/rename', { to: 'new' }, null)).status).toBe(401);
    expect((await call(m.url, 'POST', '/api/regions/nothing/rename', { to: 'new' })).status).toBe(404);
    expect(await state(m, 'old')).toEqual(before);
    expect(await state(m, 'other')).toEqual(otherBefore);

    const v = await viewer(m.url, 'old');
    const r = await call(m.url, 'POST', '/api/regions/old/rename', { to: 'ar-renamed-2026-12-02' });
    expect(r).toEqual({ status: 200, body: { region: 'ar-renamed-2026-12-02', renamed_from: 'old' } });
    expect(await withDeadline('the viewer is closed', v.closed)).toEqual({ code: 4005, reason: 'region renamed to ar-renamed-2026-12-02' });
    const after = await state(m, 'ar-renamed-2026-12-02');
    expect(after.regions).not.toContain('old');
    expect(after.row!.settings).toEqual(before.row!.settings);
    expect(after.samples).toEqual(before.samples);
    expect(after.frames).toEqual(before.frames);
    expect(after.refusals).toEqual(before.refusals);
    expect(after.alerts).toEqual(before.alerts);
    expect(after.files).toEqual(before.files);
    for (const f of ['frames', 'maps', 'inbox']) expect(existsSync(join(m.dataDir, f, 'old'))).toBe(false);
    // The maps are where the rows say.
    const frameId = (after.frames![0] as { frame_id: number }).frame_id;
    expect((await getJson<{ layer: string }>(m.url, `/api/regions/ar-renamed-2026-12-02/frames/${frameId}/map?layer=gtheta`)).layer).toBe('gtheta');
    // The inbox goes on under the new name: the file already taken is not taken again, a new one is.
    writeFileSync(join(m.dataDir, 'inbox', 'ar-renamed-2026-12-02', 'f.json'), frameBody(circlingFrame(times[5])));
    await until('f.json is taken', 20_000, async () => (await getJson<{ frames: unknown[] }>(m.url, '/api/regions/ar-renamed-2026-12-02/frames')).frames.length === 6);
    for (const t of times.slice(6)) expect((await postFrame(m.url, 'ar-renamed-2026-12-02', frameBody(circlingFrame(t)))).status).toBe(201);
    const done = await state(m, 'ar-renamed-2026-12-02');
    expect(done.row!.duplicates).toBe(0);
    // The series goes on as if the region had never changed its name.
    expect(done.samples!.map(strip)).toEqual(expected.map(strip));
    expect(m.lines).toContain('region old renamed to ar-renamed-2026-12-02');
  }, 90_000);

  it('a grid fixed by a toy frame is reset: refused without remove_frames, then the frames go and real frames are taken', async () => {
    await call(m.url, 'PUT', '/api/regions/ar-test-2026-12-02/settings', { latenessS: 7200 });
    const toy = { time: new Date(times[0] - 60_000).toISOString(), nx: 3, ny: 2, dx: 0.36, dy: 0.36, bn: [12.5, -3.1, null, 140, 220.4, 8.9], vx: [0, 0.1, 0, 0.2, 0.3, 0], vy: [0, 0, 0, 0.1, -0.1, 0] };
    expect((await postFrame(m.url, 'ar-test-2026-12-02', JSON.stringify(toy))).status).toBe(201);
    const grid = await postFrame(m.url, 'ar-test-2026-12-02', frameBody(circlingFrame(times[0])));
    expect([grid.status, grid.body.field]).toEqual([409, 'grid']);
    const before = await state(m, 'ar-test-2026-12-02');
    expect(before.frames).toHaveLength(1);

    const refusals: [unknown, number, string][] = [
      [undefined, 409, 'remove_frames'],
      [{}, 409, 'remove_frames'],
      [{ remove_frames: false }, 409, 'remove_frames'],
      [{ remove_frames: 'yes' }, 400, 'remove_frames'],
      [{ remove_frames: true, grid: 1 }, 400, 'grid'],
      ['[true]', 400, '(body)'],
    ];
    for (const [body, status, field] of refusals) {
      const r = await call(m.url, 'POST', '/api/regions/ar-test-2026-12-02/reset', body);
      expect([JSON.stringify(body), r.status, r.body.field]).toEqual([JSON.stringify(body), status, field]);
    }
    const told = await call(m.url, 'POST', '/api/regions/ar-test-2026-12-02/reset');
    expect(told.body.problem).toMatch(/holds 1 frame\(s\) of 3x2 pixels of 0\.36x0\.36 Mm/);
    expect((await call(m.url, 'POST', '/api/regions/ar-test-2026-12-02/reset', { remove_frames: true }, null)).status).toBe(401);
    expect((await call(m.url, 'POST', '/api/regions/nothing/reset', { remove_frames: true })).status).toBe(404);
    expect(await state(m, 'ar-test-2026-12-02')).toEqual(before);

    const r = await call(m.url, 'POST', '/api/regions/ar-test-2026-12-02/reset', { remove_frames: true });
    expect(r).toEqual({ status: 200, body: { region: 'ar-test-2026-12-02', reset: { frames_removed: 1, samples_removed: 1, grid_was: { nx: 3, ny: 2, dx: 0.36, dy: 0.36 } } } });
    const after = await state(m, 'ar-test-2026-12-02');
    expect(after.frames).toEqual([]);
    expect(after.samples).toEqual([]);
    expect(after.files.slice(0, 2)).toEqual([[], []]);
    expect(after.row!.settings).toEqual(before.row!.settings);
    expect(after.refusals).toEqual(before.refusals); // the record of what happened stays
    // A region without frames has no grid to reset.
    expect((await call(m.url, 'POST', '/api/regions/ar-test-2026-12-02/reset')).body).toEqual({ region: 'ar-test-2026-12-02', reset: { frames_removed: 0, samples_removed: 0, grid_was: null } });
    // Real frames are taken now, and the series is that of a region that never saw the toy.
    for (const t of times) expect((await postFrame(m.url, 'ar-test-2026-12-02', frameBody(circlingFrame(t)))).status).toBe(201);
    const real = await state(m, 'ar-test-2026-12-02');
    expect(real.samples!.map(strip)).toEqual(expected.map(strip));
  }, 90_000);

  it('a new folder under the inbox becomes its region, with a log line, and its files are taken', async () => {
    const dir = join(m.dataDir, 'inbox', 'ar-folder-2026-12-02');
    mkdirSync(dir);
    await until('the region is created', 20_000, () => m.lines.includes('region ar-folder-2026-12-02 created for its new inbox folder inbox/ar-folder-2026-12-02'));
    writeFileSync(join(dir, 'a.json'), frameBody(circlingFrame(times[0])));
    await until('a.json is taken', 20_000, async () => (await getJson<{ frames: unknown[] }>(m.url, '/api/regions/ar-folder-2026-12-02/frames')).frames.length === 1);
    // A folder whose name is not a region name is left alone, said once.
    mkdirSync(join(m.dataDir, 'inbox', 'bad name'));
    await until('the folder with a bad name is reported', 20_000, () => m.lines.some((l) => l.includes('"bad name" is not a region name')));
    expect((await getJson<{ regions: { name: string }[] }>(m.url, '/api/regions')).regions.map((r) => r.name)).not.toContain('bad name');
  }, 60_000);

  it('removing a region while frames arrive for it: every answer is a stored frame or a refusal, and every stored frame is whole', async () => {
    for (const t of times.slice(0, 2)) expect((await postFrame(m.url, 'busy', frameBody(circlingFrame(t)))).status).toBe(201);
    const posts = times.slice(2).map((t) => postFrame(m.url, 'busy', frameBody(circlingFrame(t))));
    const removal = call(m.url, 'DELETE', '/api/regions/busy');
    const answers = await Promise.all(posts);
    expect((await removal).status).toBe(200);
    for (const a of answers) expect([200, 201, 503]).toContain(a.status);
    await waitIdle(m.url);
    const left = await state(m, 'busy');
    // What was stored after the removal is a region of its own, consistent: each frame has its
    // file and, once computed, its maps.
    for (const f of (left.frames ?? []) as { frame_id: number }[]) {
      const map = await fetch(`${m.url}/api/regions/busy/frames/${f.frame_id}/map?layer=gtheta`);
      expect(map.status).toBe(200);
    }
    expect(left.files[0]).toHaveLength(left.frames?.length ?? 0);
    // Each frame acknowledged went with the region or is in the one made after it: none lost, none in both.
    const removed = ((await removal).body.removed as { frames: number }).frames;
    expect(removed + (left.frames?.length ?? 0)).toBe(2 + answers.filter((x) => x.status === 201).length);
  }, 60_000);

  it('renaming a region while frames arrive for it: each acknowledged frame is computed once, under one of the two names', async () => {
    for (const t of times.slice(0, 2)) expect((await postFrame(m.url, 'moving', frameBody(circlingFrame(t)))).status).toBe(201);
    const posts = times.slice(2).map((t) => postFrame(m.url, 'moving', frameBody(circlingFrame(t))));
    const rename = call(m.url, 'POST', '/api/regions/moving/rename', { to: 'moved' });
    const answers = await Promise.all(posts);
    expect((await rename).status).toBe(200);
    for (const a of answers) expect(a.status).toBe(201);
    await waitIdle(m.url);
    let total = 0;
    for (const region of ['moved', 'moving']) {
      const s = await state(m, region);
      const frames = (s.frames ?? []) as { frame_id: number; processed: boolean }[];
      total += frames.length;
      // Every frame computed (one sample each: they carry their velocity), its files in place.
      expect(frames.every((f) => f.processed)).toBe(true);
      expect(s.samples ?? []).toHaveLength(frames.length);
      expect(s.files[0]).toHaveLength(frames.length);
      expect(s.files[1]).toHaveLength(frames.length);
    }
    expect(total).toBe(times.length);
  }, 60_000);

  it('a running replay: its source region cannot be removed or renamed, its target cannot be renamed or reset; removing the target stops it', async () => {
    // At the archive's own cadence (60-100 s between frames) the replay is still running below.
    const start = await call(m.url, 'POST', '/api/regions/ar-replay-2026-12-02/replay', { action: 'start', from_region: 'ref', speed: 1 });
    expect(start.status).toBe(201);
    await until('the replay stored its first frame', 20_000, async () => (await getJson<{ regions: { name: string; frames: number }[] }>(m.url, '/api/regions')).regions.some((x) => x.name === 'ar-replay-2026-12-02' && x.frames > 0));
    const ref = await state(m, 'ref');
    for (const [method, path, body] of [
      ['DELETE', '/api/regions/ref', undefined],
      ['POST', '/api/regions/ref/rename', { to: 'ref2' }],
      ['POST', '/api/regions/ar-replay-2026-12-02/rename', { to: 'ar-replay2' }],
      ['POST', '/api/regions/ar-replay-2026-12-02/reset', { remove_frames: true }],
    ] as const) {
      const r = await call(m.url, method, path, body);
      expect([path, r.status, r.body.field]).toEqual([path, 409, 'region']);
      expect(r.body.problem).toMatch(/replay/);
    }
    expect(await state(m, 'ref')).toEqual(ref);
    const r = await call(m.url, 'DELETE', '/api/regions/ar-replay-2026-12-02');
    expect(r.status).toBe(200);
    const regions = (await getJson<{ regions: { name: string; replay: unknown }[] }>(m.url, '/api/regions')).regions;
    expect(regions.map((x) => x.name)).not.toContain('ar-replay-2026-12-02');
    // The source is free again.
    expect((await call(m.url, 'POST', '/api/regions/ref/rename', { to: 'ref' })).body.field).toBe('to');
  }, 60_000);
});

describe('a rename interrupted before its files were moved', () => {
  it('is finished at the next start: the files follow the rows', async () => {
    const dataDir = tempDir();
    let m = await startMonitor({ dataDir });
    for (const t of times.slice(0, 3)) expect((await postFrame(m.url, 'first', frameBody(circlingFrame(t)))).status).toBe(201);
    await waitIdle(m.url);
    const before = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/first/series')).samples;
    await m.close();
    // What a stop right after the rename's commit leaves: the rows renamed, the chore recorded,
    // the files still under the old name.
    const store = new Store(dataDir);
    store.renameRegion('first', 'second');
    store.close();
    expect(listing(join(dataDir, 'frames', 'first'))).toHaveLength(3);
    m = await startMonitor({ dataDir });
    try {
      expect(m.lines).toContain('finished the file work of an interrupted rename of region first (to second)');
      expect(existsSync(join(dataDir, 'frames', 'first'))).toBe(false);
      expect(listing(join(dataDir, 'frames', 'second'))).toHaveLength(3);
      expect((await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/second/series')).samples).toEqual(before);
      const frames = (await getJson<{ frames: { frame_id: number }[] }>(m.url, '/api/regions/second/frames')).frames;
      for (const f of frames) expect((await fetch(`${m.url}/api/regions/second/frames/${f.frame_id}/maps.fits`)).status).toBe(200);
      const check = new Store(dataDir);
      expect(check.regionChores()).toEqual([]);
      check.close();
    } finally {
      await m.stop();
    }
  }, 60_000);
});
