// The watched folder under awkward use: many frames renamed in at once (taken in frame-time
// order, none lost, the series of the in-order run), a frame too late (moved aside to refused/,
// recorded, taken when moved back once the lateness allows), a copy that pauses half-way (taken
// whole, no refusal), links (not followed; a link to the token file never shows its content),
// and links under --replay-root that lead out of it.
import { mkdirSync, readdirSync, renameSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { appendFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { TestMonitor } from './support.js';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, postFrame, shuffled, startMonitor, tempDir, until, waitIdle } from './support.js';

const auth = { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' };
const strip = (r: SeriesRow) => ({ ...r, frame_id: null });

async function putSettings(url: string, region: string, settings: unknown): Promise<void> {
  const r = await fetch(`${url}/api/regions/${region}/settings`, { method: 'PUT', headers: auth, body: JSON.stringify(settings) });
  expect(r.status).toBe(200);
}

const frameCount = async (url: string, region: string) => (await getJson<{ frames: unknown[] }>(url, `/api/regions/${region}/frames`)).frames.length;
const refusalsOf = async (url: string, region: string) => (await getJson<{ refusals: { source: string; reason: string; status: number }[] }>(url, `/api/regions/${region}/refusals`)).refusals;

describe('the watched folder', () => {
  let m: TestMonitor;
  const times = irregularTimes(60);
  let expected: SeriesRow[];

  beforeAll(async () => {
    m = await startMonitor();
    await putSettings(m.url, 'ref', { watchFolder: false });
    for (const t of times) expect((await postFrame(m.url, 'ref', frameBody(circlingFrame(t)))).status).toBe(201);
    await waitIdle(m.url, 120_000);
    expected = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ref/series')).samples;
  }, 180_000);
  afterAll(async () => { await m?.stop(); });

  it('60 frames renamed in at once, in a shuffled order, spanning more than the lateness: all taken, in time order, the series of the in-order run', async () => {
    // The span of the 60 frames (about 78 min) is beyond a lateness of 10 min: taken in the order
    // the file system reports them, frames would be refused as too late.
    await putSettings(m.url, 'burst', { latenessS: 600 });
    const inbox = join(m.dataDir, 'inbox', 'burst');
    const staging = join(m.dataDir, 'staging-burst');
    mkdirSync(staging, { recursive: true });
    // Names that say nothing of the order (as a sender's hashes or ids might).
    const names = shuffled(times.map((_, i) => `f${(i * 2654435761 % 2 ** 32).toString(16).padStart(8, '0')}.json`), 5);
    times.forEach((t, i) => writeFileSync(join(staging, names[i]), frameBody(circlingFrame(t))));
    await until('the inbox exists', 10_000, () => { try { readdirSync(inbox); return true; } catch { return false; } });
    // The first frame alone, so that the folder is being watched when the rest land.
    renameSync(join(staging, names[0]), join(inbox, names[0]));
    await until('the first frame is stored', 20_000, async () => (await frameCount(m.url, 'burst')) === 1);
    for (const i of shuffled(names.map((_, k) => k).slice(1), 12)) renameSync(join(staging, names[i]), join(inbox, names[i]));
    await until('all 60 frames are stored', 90_000, async () => (await frameCount(m.url, 'burst')) === times.length);
    await waitIdle(m.url, 120_000);
    const got = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/burst/series')).samples;
    expect(await refusalsOf(m.url, 'burst')).toEqual([]);
    expect(got.map(strip)).toEqual(expected.map(strip));
    expect(m.lines.filter((l) => /burst: a frame came in late/.test(l))).toEqual([]);
  }, 240_000);

  it('a frame too late is moved to refused/ and recorded; moved back once the lateness allows, it is taken', async () => {
    await putSettings(m.url, 'late', { latenessS: 300 });
    const inbox = join(m.dataDir, 'inbox', 'late');
    await until('the inbox exists', 10_000, () => { try { readdirSync(inbox); return true; } catch { return false; } });
    writeFileSync(join(inbox, 'a.json'), frameBody(circlingFrame(times[10])));
    await until('the first frame is stored', 20_000, async () => (await frameCount(m.url, 'late')) === 1);
    writeFileSync(join(inbox, 'old.json'), frameBody(circlingFrame(times[0])));
    const refused = join(inbox, 'refused', 'old.json');
    await until('old.json is moved to refused/', 20_000, () => { try { return readdirSync(join(inbox, 'refused')).includes('old.json'); } catch { return false; } });
    const r = await refusalsOf(m.url, 'late');
    expect(r).toHaveLength(1);
    expect(r[0]).toMatchObject({ source: 'inbox/late/old.json', status: 409 });
    expect(r[0].reason).toMatch(/too late/);
    await putSettings(m.url, 'late', { latenessS: 3600 });
    renameSync(refused, join(inbox, 'old.json'));
    await until('old.json is taken once moved back', 20_000, async () => (await frameCount(m.url, 'late')) === 2);
  }, 60_000);

  it('a copy that pauses half-way for longer than the settle time is taken whole, without a refusal', async () => {
    await putSettings(m.url, 'slow', {});
    const inbox = join(m.dataDir, 'inbox', 'slow');
    await until('the inbox exists', 10_000, () => { try { readdirSync(inbox); return true; } catch { return false; } });
    const text = frameBody(circlingFrame(times[0]));
    const file = join(inbox, 'slow.json');
    await writeFile(file, text.slice(0, text.length >> 1));
    await new Promise((r) => setTimeout(r, 800)); // longer than the 200 ms the folder waits for a stable size
    await appendFile(file, text.slice(text.length >> 1));
    await until('the frame is stored', 30_000, async () => (await frameCount(m.url, 'slow')) === 1);
    expect(await refusalsOf(m.url, 'slow')).toEqual([]);
  }, 60_000);

  it('links are not followed: a link to the token file is refused without a word of its content, and moved aside', async () => {
    await putSettings(m.url, 'links', {});
    const inbox = join(m.dataDir, 'inbox', 'links');
    await until('the inbox exists', 10_000, () => { try { readdirSync(inbox); return true; } catch { return false; } });
    // The test monitor takes its token from the environment: write one to a file to point at.
    const secret = join(m.dataDir, 'secret-token');
    writeFileSync(secret, TOKEN + '\n', { mode: 0o600 });
    symlinkSync(secret, join(inbox, 'leak.json'));
    symlinkSync(secret, join(inbox, 'leak.fits'));
    await until('both links are moved to refused/', 30_000, () => { try { return readdirSync(join(inbox, 'refused')).length === 2; } catch { return false; } });
    const r = await refusalsOf(m.url, 'links');
    expect(r).toHaveLength(2);
    for (const x of r) {
      expect(x.reason).toMatch(/symbolic link/);
      expect(x.reason).not.toContain(TOKEN.slice(0, 4));
    }
    expect(JSON.stringify(await getJson(m.url, '/api/regions/links/refusals'))).not.toContain(TOKEN.slice(0, 4));
  }, 60_000);
});

describe('--replay-root', () => {
  it('a link in a replayed folder that leads out of the root is not followed', async () => {
    const base = tempDir();
    const root = join(base, 'root');
    const folder = join(root, 'campaign');
    mkdirSync(folder, { recursive: true });
    const times = irregularTimes(3);
    writeFileSync(join(folder, 'a.json'), frameBody(circlingFrame(times[0])));
    writeFileSync(join(folder, 'b.json'), frameBody(circlingFrame(times[1])));
    writeFileSync(join(base, 'outside.json'), frameBody(circlingFrame(times[2])));
    symlinkSync(join(base, 'outside.json'), join(folder, 'c.json'));
    const m = await startMonitor({ replayRoot: root });
    try {
      const r = await fetch(`${m.url}/api/regions/rp/replay`, { method: 'POST', headers: auth, body: JSON.stringify({ action: 'start', folder: 'campaign', speed: 0 }) });
      expect(r.status).toBe(201);
      const body = (await r.json()) as { replay: { total: number } };
      expect(body.replay.total).toBe(2);
      await until('the replay is done', 30_000, () => m.lines.some((l) => /replay into "rp" done/.test(l)));
      const frames = (await getJson<{ frames: { time: string }[] }>(m.url, '/api/regions/rp/frames')).frames;
      expect(frames.map((f) => f.time)).toEqual(times.slice(0, 2).map((t) => new Date(t).toISOString()));
    } finally {
      await m.stop();
      rmSync(base, { recursive: true, force: true });
    }
  });
});
