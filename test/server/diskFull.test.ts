// A full disk, made real: the monitor's data folder is a small tmpfs (mounted for the test,
// which needs root; skipped with a message otherwise, required with CI=true). The monitor runs
// in its own process, so that an unhandled rejection would end it visibly. While the disk is
// full: requests without the token, bad requests and good frames all get their answers (no
// crash), good frames get 507 with Retry-After, a frame stored whose maps cannot be written
// stays pending (never "analysis failed"), and health says the disk is full. Once space
// returns - while running, and after a kill -9 and a restart - every frame is processed and the
// series equals that of a run that never saw a full disk.
import { execFileSync } from 'node:child_process';
import { closeSync, mkdirSync, openSync, rmSync, statfsSync, unlinkSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import type { SeriesRow } from '../../core/seriesColumns.js';
import type { ChildMonitor } from './support.js';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, launchMonitor, postFrame, startMonitor, tempDir, until, waitIdle } from './support.js';

const isRoot = process.getuid?.() === 0;
const required = process.env.CI === 'true';

/** Mounts a tmpfs of `mib` MiB at a new folder; undefined (with the reason) when it cannot. */
function mountTmpfs(mib: number): { dir: string } | { reason: string } {
  if (!isRoot) return { reason: 'not running as root (mounting a tmpfs needs it)' };
  const dir = tempDir('helicord-diskfull-');
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${mib}m,mode=0700`, 'tmpfs', dir], { stdio: 'pipe' });
    return { dir };
  } catch (e) {
    rmSync(dir, { recursive: true, force: true });
    return { reason: `mount -t tmpfs failed: ${String((e as { stderr?: Buffer }).stderr ?? e).trim()}` };
  }
}

function unmount(dir: string): void {
  try { execFileSync('umount', [dir], { stdio: 'pipe' }); } catch { execFileSync('umount', ['-l', dir], { stdio: 'pipe' }); }
  rmSync(dir, { recursive: true, force: true });
}

/** Fills the file system at `dir` so that about `leave` bytes stay free (the filler is `dir`/fill/filler). */
function leaveFree(dir: string, leave: number): void {
  const fillDir = join(dir, 'fill');
  mkdirSync(fillDir, { recursive: true });
  const file = join(fillDir, 'filler');
  try { unlinkSync(file); } catch { /* none yet */ }
  const st = statfsSync(dir);
  let todo = Math.max(0, st.bavail * st.bsize - leave);
  const fd = openSync(file, 'w');
  const chunk = Buffer.alloc(64 * 1024, 1);
  try {
    while (todo > 0) {
      const n = Math.min(chunk.length, todo);
      try { writeSync(fd, chunk, 0, n); } catch { break; } // ENOSPC: as full as it gets
      todo -= n;
    }
  } finally {
    closeSync(fd);
  }
}

function freeAll(dir: string): void {
  try { unlinkSync(join(dir, 'fill', 'filler')); } catch { /* none */ }
}

const strip = (r: SeriesRow) => ({ ...r, frame_id: null });

describe('a full disk', () => {
  if (!isRoot) console.warn(`diskFull.test: not running as root (mounting a tmpfs needs it): ${required ? 'CI=true, so it runs and fails' : 'SKIPPED; run as root, or with CI=true to require it'}`);

  it.skipIf(!isRoot && !required)('is answered, never crashes the monitor, loses no frame, and is recovered from when space returns (running, and after kill -9)', async (ctx) => {
    const mounted = mountTmpfs(24);
    if ('reason' in mounted) {
      if (required) throw new Error(`the disk-full test is required with CI=true: ${mounted.reason}`);
      console.warn(`diskFull.test: ${mounted.reason}; SKIPPED`);
      return ctx.skip();
    }
    const dir = mounted.dir;
    const times = irregularTimes(10);
    const bodies = times.map((t) => frameBody(circlingFrame(t)));
    // The run that never saw a full disk.
    let expected: SeriesRow[] = [];
    try {
      const ref = await startMonitor();
      try {
        for (const b of bodies) expect((await postFrame(ref.url, 'ar', b)).status).toBe(201);
        await waitIdle(ref.url);
        expected = (await getJson<{ samples: SeriesRow[] }>(ref.url, '/api/regions/ar/series')).samples;
      } finally {
        await ref.stop();
      }
    } catch (e) {
      unmount(dir);
      throw e;
    }

    let m: ChildMonitor | undefined;
    const data = join(dir, 'data');
    try {
      m = await launchMonitor(data, { bodyLimit: 1_000_000 });
      const settings = await fetch(`${m.url}/api/regions/ar/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"watchFolder": false}' });
      expect(settings.status).toBe(200);
      for (const b of bodies.slice(0, 4)) expect((await postFrame(m.url, 'ar', b)).status).toBe(201);
      await waitIdle(m.url);
      const framesBefore = (await getJson<{ frames: unknown[] }>(m.url, '/api/regions/ar/frames')).frames.length;

      // --- The disk is full -------------------------------------------------------------------
      leaveFree(dir, 0);
      for (let i = 0; i < 5; i++) {
        const ws = new WebSocket(`${m.url.replace('http', 'ws')}/ws/ingest?region=ar&token=wrong`);
        const status = await new Promise<number>((r) => { ws.once('unexpected-response', (_q, res) => { r(res.statusCode ?? 0); res.resume(); }); ws.once('error', () => r(0)); });
        expect(status).toBe(401);
      }
      // Still there: it answers the next requests (no fixed sleep before looking).
      expect(m.alive()).toBe(true);
      for (let i = 0; i < 20; i++) expect((await postFrame(m.url, i % 2 ? 'ar' : `nobody${i}`, bodies[4], { token: i % 3 ? 'wrong' : null })).status).toBe(401);
      const bad = [
        await postFrame(m.url, 'ar', 'hello', { type: 'text/plain' }),
        await postFrame(m.url, 'ar', '{"time": '),
        await postFrame(m.url, 'ar', frameBody({ ...circlingFrame(times[4]), nx: 7 })),
        await postFrame(m.url, 'ar', Buffer.alloc(1_500_000, 32)),
      ];
      expect(bad.map((r) => r.status)).toEqual([415, 400, 422, 413]);
      const good = await fetch(`${m.url}/api/regions/ar/frames`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: bodies[4] });
      expect(good.status).toBe(507);
      expect(Number(good.headers.get('retry-after'))).toBeGreaterThan(0);
      const health = await getJson<{ disk: { full: boolean } }>(m.url, '/api/health');
      expect(health.disk.full).toBe(true);
      expect(m.alive()).toBe(true);

      // --- Room for a frame file, not for its maps: stored, then waits (not "analysis failed") --
      leaveFree(dir, 160 * 1024);
      expect((await postFrame(m.url, 'ar', bodies[4])).status).toBe(201);
      // The 201 was a successful write (disk "not full"); the failed maps write sets it again.
      const diskFull = async () => (await getJson<{ disk: { full: boolean } }>(m!.url, '/api/health')).disk.full;
      await until('the maps write fails for lack of space', 20_000, diskFull);
      expect(m.log()).toMatch(/waits for space/);
      const pending = (await getJson<{ frames: { processed: boolean; note: string | null }[] }>(m.url, '/api/regions/ar/frames')).frames;
      expect(pending).toHaveLength(framesBefore + 1);
      expect(pending.at(-1)).toMatchObject({ processed: false, note: null });

      // --- Space returns while running: the waiting frame is processed ------------------------
      freeAll(dir);
      await waitIdle(m.url, 90_000);
      expect((await getJson<{ disk: { full: boolean } }>(m.url, '/api/health')).disk.full).toBe(false);

      // --- Full again with a frame waiting; kill -9; space returns; restart ------------------
      leaveFree(dir, 160 * 1024);
      expect((await postFrame(m.url, 'ar', bodies[5])).status).toBe(201);
      await until('the maps write fails again', 20_000, diskFull);
      expect(m.alive()).toBe(true);
      expect(m.log()).not.toMatch(/unhandled/);
      await m.kill9();
      freeAll(dir);
      m = await launchMonitor(data, { bodyLimit: 1_000_000 });
      await waitIdle(m.url, 90_000);
      for (const b of bodies.slice(6)) expect((await postFrame(m.url, 'ar', b)).status).toBe(201);
      await waitIdle(m.url, 90_000);

      const got = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar/series')).samples;
      const frames = (await getJson<{ frames: { processed: boolean; note: string | null }[] }>(m.url, '/api/regions/ar/frames')).frames;
      expect(frames).toHaveLength(times.length);
      expect(frames.filter((f) => !f.processed || /failed/.test(f.note ?? ''))).toEqual([]);
      expect(got.map(strip)).toEqual(expected.map(strip));
      // Only requests with the token left a refusal (when there was room for it); none without.
      const refusals = (await getJson<{ refusals: { status: number }[] }>(m.url, '/api/regions/ar/refusals')).refusals;
      expect(refusals.every((r) => r.status !== 401)).toBe(true);
      expect(m.log()).not.toMatch(/unhandled/);
      expect(m.alive()).toBe(true);
    } finally {
      if (m?.alive()) await m.stop();
      unmount(dir);
    }
  }, 300_000);
});

describe('frames an earlier run marked failed for lack of space', () => {
  it('are processed again at the next start: the series is the one the disk never interrupted', async () => {
    const Database = (await import('better-sqlite3')).default;
    const dir = tempDir();
    const times = irregularTimes(6);
    try {
      let m = await startMonitor({ dataDir: dir });
      await fetch(`${m.url}/api/regions/ar/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"watchFolder": false}' });
      for (const t of times) expect((await postFrame(m.url, 'ar', frameBody(circlingFrame(t)))).status).toBe(201);
      await waitIdle(m.url);
      const expected = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar/series')).samples;
      await m.close();
      // What a run that could not write frame 3's maps left: the frame failed, without a sample.
      const db = new Database(join(dir, 'helicord.sqlite'));
      const f3 = db.prepare('SELECT id FROM frames WHERE region = ? ORDER BY time LIMIT 1 OFFSET 3').get('ar') as { id: number };
      db.prepare("UPDATE frames SET processed = 2, waiting = 'analysis failed: ENOSPC: no space left on device, write' WHERE id = ?").run(f3.id);
      db.prepare('DELETE FROM samples WHERE frame_id = ?').run(f3.id);
      db.close();
      m = await startMonitor({ dataDir: dir });
      try {
        await waitIdle(m.url);
        const got = (await getJson<{ samples: SeriesRow[] }>(m.url, '/api/regions/ar/series')).samples;
        expect(got.map(strip)).toEqual(expected.map(strip));
        expect(m.lines.some((l) => /processed again \(an earlier run could not write their results/.test(l))).toBe(true);
      } finally {
        await m.close();
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
