// Durability: the monitor runs in a child process (test/server/launch.mjs, compiled dist/ code)
// and is killed with SIGKILL in the middle of a stream, twice; after each restart the sender
// resends everything from the start. The final series must equal that of an uninterrupted run,
// with every frame stored once and no sample counted twice.
import { spawn } from 'node:child_process';
import type { ChildProcess } from 'node:child_process';
import { rmSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, postFrame, startMonitor, tempDir, waitIdle } from './support.js';

const launcher = fileURLToPath(new URL('./launch.mjs', import.meta.url));

async function launch(dataDir: string): Promise<{ child: ChildProcess; url: string }> {
  const child = spawn(process.execPath, [launcher, dataDir], { env: { ...process.env, HELICORD_TOKEN: TOKEN }, stdio: ['ignore', 'pipe', 'pipe'] });
  let err = '';
  child.stderr!.on('data', (d) => (err += d));
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    child.stdout!.on('data', (d) => {
      out += d;
      const m = /LISTENING (\S+)/.exec(out);
      if (m) resolve(m[1]);
    });
    child.once('exit', (code) => reject(new Error(`monitor exited (${code}) before listening: ${err}`)));
  });
  return { child, url };
}

function kill9(child: ChildProcess): Promise<void> {
  return new Promise((r) => { child.once('exit', () => r()); child.kill('SIGKILL'); });
}

describe('durability: kill -9 in the middle of a stream, restart, resend everything', () => {
  const times = irregularTimes(16);
  const bodies = times.map((t) => frameBody(circlingFrame(t)));

  it('the budget equals the uninterrupted run, every frame is stored once', async () => {
    // The uninterrupted run.
    const ref = await startMonitor();
    for (const b of bodies) await postFrame(ref.url, 'ar', b);
    await waitIdle(ref.url);
    const expected = (await getJson<{ samples: SeriesRow[] }>(ref.url, '/api/regions/ar/series')).samples;
    await ref.stop();
    expect(expected).toHaveLength(times.length);

    const dir = tempDir();
    try {
      // Run 1: send 6 frames, the 7th in flight, then kill without waiting for the computation.
      let { child, url } = await launch(dir);
      for (const b of bodies.slice(0, 6)) expect((await postFrame(url, 'ar', b)).status).toBe(201);
      const inFlight = postFrame(url, 'ar', bodies[6]).catch(() => undefined);
      await kill9(child);
      await inFlight;

      // Run 2: resend from the start; kill again after 11 answers.
      ({ child, url } = await launch(dir));
      const answers2: number[] = [];
      for (const b of bodies.slice(0, 11)) answers2.push((await postFrame(url, 'ar', b)).status);
      // Frames 0..5 were acknowledged before the kill: they must come back as duplicates.
      expect(answers2.slice(0, 6)).toEqual([200, 200, 200, 200, 200, 200]);
      expect(answers2.slice(7)).toEqual([201, 201, 201, 201]);
      await kill9(child);

      // Run 3: resend everything and let it finish.
      ({ child, url } = await launch(dir));
      const answers3: number[] = [];
      for (const b of bodies) answers3.push((await postFrame(url, 'ar', b)).status);
      expect(answers3.slice(0, 11)).toEqual(Array(11).fill(200));
      expect(answers3.slice(11)).toEqual(Array(5).fill(201));
      await waitIdle(url);
      const got = (await getJson<{ samples: SeriesRow[] }>(url, '/api/regions/ar/series')).samples;
      const frames = (await getJson<{ frames: { time: string }[] }>(url, '/api/regions/ar/frames')).frames;
      child.kill('SIGTERM');
      await new Promise((r) => child.once('exit', r));

      expect(frames).toHaveLength(times.length);
      expect(new Set(frames.map((f) => f.time)).size).toBe(times.length);
      expect(got).toHaveLength(times.length);
      const strip = (r: SeriesRow) => ({ ...r, frame_id: null });
      expect(got.map(strip)).toEqual(expected.map(strip));
      expect(got.at(-1)!.budget_total).toBe(expected.at(-1)!.budget_total);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
