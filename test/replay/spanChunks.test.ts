// Chunks of a batch span: two per worker when the extra primer frames are few (the later frames of
// an archive cost more, so a worker done early takes another chunk), and a run in four chunks on two
// workers equals the same archive through one worker. The reference is the project's own one-worker
// run: nothing outside the project is involved.
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EXTRA_PRIMER_SHARE, spanChunks } from '../../replay/pooledBatch.js';
import { processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { ensureCompiledWorker } from './compiledWorker.js';

const series = (n: number, cadenceS: number) => Array.from({ length: n }, (_, i) => ({
  file: `f${i}.fits`, time: i * cadenceS * 1000, hasVelocity: false, nx: 8, ny: 8, dx: 1, dy: 1,
}));

describe('chunks of a span', () => {
  it('two per worker when the extra primer frames stay within the share, one per worker otherwise', () => {
    // 720 s cadence: 5 primer frames per border. 600 frames, 2 workers: 3 borders instead of 1, 10
    // more primer frames, within 5 % of 600.
    expect(spanChunks(series(600, 720), { start: 0, end: 600 }, 2, {}).map((c) => c.start)).toEqual([0, 150, 300, 450]);
    // 80 frames: the same 10 are more than 4.
    expect(spanChunks(series(80, 720), { start: 0, end: 80 }, 2, {}).map((c) => c.start)).toEqual([0, 40]);
    // 45 s cadence: 20 primer frames per border, 40 more: more than 30 of 600.
    expect(spanChunks(series(600, 45), { start: 0, end: 600 }, 2, {}).length).toBe(2);
    // One worker: one chunk; a span inside the archive keeps its borders inside.
    expect(spanChunks(series(600, 720), { start: 0, end: 600 }, 1, {})).toEqual([{ start: 0, end: 600 }]);
    expect(spanChunks(series(600, 720), { start: 100, end: 500 }, 2, {}).map((c) => [c.start, c.end])).toEqual([[100, 200], [200, 300], [300, 400], [400, 500]]);
    expect(EXTRA_PRIMER_SHARE).toBe(0.05);
  });
});

let dir: string;
beforeAll(async () => {
  ensureCompiledWorker();
  dir = await mkdtemp(join(tmpdir(), 'helicord-span-'));
});
afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

describe('process in four chunks on two workers', () => {
  it('gives the samples of a one-worker run', async () => {
    // 220 frames of 24^2 at 720 s: chunks from 0, 55, 110, 165 (15 more primer frames than two chunks, within 11).
    const frames = 220;
    const folder = join(dir, 'long');
    await synth({ out: folder, frames, size: 24, withVelocity: false });
    const quiet = () => new Writable({ write(_c, _e, done) { done(); } });
    const run = async (workers: number) => {
      const out = join(dir, `w${workers}.csv`);
      await processFolder({ folder, out, workers, progress: quiet() });
      return (await readFile(out, 'utf8')).trim().split('\n').map((l) => l.split(','));
    };
    const [a, b] = [await run(1), await run(2)];
    expect(b.length).toBe(a.length);
    expect(a.length).toBe(frames);
    // Numbers to 1e-12 relative; a background is the total less spin and orbit (each chunk sums the
    // split in its own tracker's id order), so its rounding is that of the total.
    const col = (name: string) => a[0].indexOf(name);
    a.forEach((row, i) => row.forEach((v, k) => {
      const x = Number(v), y = Number(b[i][k]);
      const name = a[0][k];
      const of = name === 'rate_background' ? Math.abs(Number(row[col('rate_total')])) : name === 'budget_background' ? Math.abs(Number(row[col('budget_total')])) : 0;
      if (v !== '' && Number.isFinite(x)) expect(Math.abs(y - x), `${name} of row ${i}`).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(x), of));
      else expect(b[i][k]).toBe(v);
    }));
  }, 240_000);
});
