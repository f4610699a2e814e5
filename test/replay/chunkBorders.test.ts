// Worker chunk borders of `process`: a chunked run equals a one-worker run. Its samples (the
// analysis state before each chunk's first sample is rebuilt from primer frames), and its
// footpoint ids, windings and spin budgets (mapped onto the chunk before at the seam). The
// reference is the same archive through one worker: nothing outside the project is involved.
import { mkdtemp, readFile, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { AnalysisState } from '../../core/frameAnalysis.js';
import { readFitsImage } from '../../core/fits/readImage.js';
import { loadFrameFile } from '../../replay/frameFiles.js';
import { primerStart } from '../../replay/chunkPriming.js';
import { contiguousChunks, processFolder } from '../../replay/processCommand.js';
import { synth } from '../../replay/synthCommand.js';
import { ensureCompiledWorker } from './compiledWorker.js';

const quiet = () => new Writable({ write(_c, _e, done) { done(); } });

describe('primer frames of a chunk', () => {
  const series = (n: number, cadenceS: number, hasVelocity = false) => Array.from({ length: n }, (_, i) => ({ time: i * cadenceS * 1000, hasVelocity }));

  it('reach the motion baseline before each of the last four tracked frames (the tracker remembers three)', () => {
    // 45 s: frames within 720 s before the pair's first frame (16 + that frame = 17), three more
    // tracked frames before it.
    expect(primerStart(series(100, 45), 60)).toBe(60 - 20);
    // 720 s: the pair partner of each of the last four tracked frames.
    expect(primerStart(series(100, 720), 60)).toBe(60 - 5);
    // A longer baseline reaches further back.
    expect(primerStart(series(100, 45), 60, { motionBaselineS: 1440 })).toBe(60 - 36);
    // Frames with their velocities need no partner and no history: the tracked frames alone.
    expect(primerStart(series(100, 45, true), 60)).toBe(60 - 4);
    // Near the start of the archive, all of it.
    expect(primerStart(series(100, 45), 19)).toBe(0);
    expect(primerStart(series(100, 45), 0)).toBe(0);
  });

  it('reach past a hole too long to infer a velocity over, to the frames tracked before it', () => {
    // 720 s cadence with 2 h more before frame 10 (beyond the default 1800 s over which a velocity
    // is inferred): frame 10 pairs with nothing, so the last four tracked frames before frame 12
    // are 11, 9, 8 and 7, and frame 7 needs its partner 6.
    const frames = series(20, 720).map((f, i) => ({ ...f, time: f.time + (i >= 10 ? 7200e3 : 0) }));
    expect(primerStart(frames, 12)).toBe(6);
  });
});

let dir: string;
beforeAll(async () => {
  ensureCompiledWorker();
  dir = await mkdtemp(join(tmpdir(), 'helicord-borders-'));
});
afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

interface Row { id: number; parent: number | null; born: string; status: string; spinBudget: number | null; x: number }
interface Report { file: string; footpoints: Row[]; events: unknown[]; pairs: { a: number; b: number; windingTurns: number | null }[]; pairMatrix: { ids: number[]; windingTurns: (number | null)[][] } }

describe('process with inferred velocities at 45 s cadence: 1 worker and 3', () => {
  it('give the same samples, footpoint ids, events, windings, spin budgets and label maps', async () => {
    // 66 frames (49 min) of the demo story at 12 times its pace: the bipole emerges (two
    // footpoints appear after the first chunk border) and its leading spot starts turning (spin
    // budgets under way at the second border). Chunks: frames 0-21, 22-43, 44-65.
    const frames = 66;
    const folder = join(dir, 'demo45');
    await synth({ out: folder, frames, size: 64, withVelocity: false, demo: { cadenceS: 45, storyH: 4, storyStartH: -1.5 } });
    const run = async (workers: number) => {
      const out = join(dir, `w${workers}.csv`), json = join(dir, `w${workers}.json`), maps = join(dir, `maps${workers}`);
      await processFolder({ folder, out, json, maps, workers, progress: quiet() });
      return { csv: await readFile(out, 'utf8'), doc: JSON.parse(await readFile(json, 'utf8')), maps };
    };
    const one = await run(1), three = await run(3);
    expect(contiguousChunks(frames, 3).map((c) => c.start)).toEqual([0, 22, 44]);

    // Samples: every number within 1e-12 relative (the label split of a chunk is summed in its
    // tracker's id order, so the spin, orbit and background agree to rounding).
    const rows = (csv: string) => csv.trim().split('\n').map((l) => l.split(','));
    const [a, b] = [rows(one.csv), rows(three.csv)];
    expect(b.length).toBe(a.length);
    expect(a.length).toBe(frames); // the header and 65 samples
    a.forEach((row, i) => row.forEach((v, k) => {
      const x = Number(v), y = Number(b[i][k]);
      if (v !== '' && Number.isFinite(x)) expect(Math.abs(y - x), `${a[0][k]} of row ${i}`).toBeLessThanOrEqual(1e-12 * Math.abs(x));
      else expect(b[i][k]).toBe(v);
    }));

    // Footpoints: ids, parents, birth times, events and top pairs equal; spin budgets and windings
    // to the rounding of sums (offsets added at the seam: 1e-12 of the largest spin budget, 1e-12 turn).
    const fa: Report[] = one.doc.footpoints, fb: Report[] = three.doc.footpoints;
    expect(fb.length).toBe(fa.length);
    const spinScale = Math.max(...fa.flatMap((r) => r.footpoints.map((f) => Math.abs(f.spinBudget ?? 0))));
    fa.forEach((r, i) => {
      const s = fb[i];
      expect(s.file).toBe(r.file);
      expect(s.footpoints.map((f) => [f.id, f.parent, f.born, f.status])).toEqual(r.footpoints.map((f) => [f.id, f.parent, f.born, f.status]));
      r.footpoints.forEach((f, k) => {
        const g = s.footpoints[k].spinBudget;
        if (f.spinBudget === null) expect(g).toBeNull();
        else expect(Math.abs(g! - f.spinBudget), `spin budget of ${f.id} in ${r.file}`).toBeLessThanOrEqual(1e-12 * spinScale);
      });
      expect(s.events).toEqual(r.events);
      expect(s.pairs.map((p) => [p.a, p.b])).toEqual(r.pairs.map((p) => [p.a, p.b]));
      expect(s.pairMatrix.ids).toEqual(r.pairMatrix.ids);
      r.pairMatrix.windingTurns.forEach((line, p) => line.forEach((w, q) => {
        const v = s.pairMatrix.windingTurns[p][q];
        if (w === null) expect(v).toBeNull();
        else expect(Math.abs(v! - w), `winding ${r.pairMatrix.ids[p]}-${r.pairMatrix.ids[q]} in ${r.file}`).toBeLessThanOrEqual(1e-12);
      }));
    });
    // Label maps (--maps) carry the same ids.
    const names = (await readdir(one.maps)).sort();
    expect(names).toHaveLength(frames - 1); // the first frame only waits for its partner
    for (const name of names) {
      const la = readFitsImage(new Uint8Array(await readFile(join(one.maps, name))), name, { extname: 'LABELS' }).values;
      const lb = readFitsImage(new Uint8Array(await readFile(join(three.maps, name))), name, { extname: 'LABELS' }).values;
      expect(Array.from(lb), name).toEqual(Array.from(la));
    }

    // What makes the comparison bite: footpoints appear after the first border (new ids there),
    // spin budgets and windings are under way at the second, and a tracker started afresh at the
    // third chunk's first primer frame numbers the footpoints otherwise than the whole run does.
    const indexOf = (file: string) => Number(/demo_(\d+)/.exec(file)![1]);
    const appeared = (one.doc.events as { file: string; kind: string }[]).filter((e) => e.kind === 'appeared').map((e) => indexOf(e.file));
    expect(appeared.some((i) => i > 22 && i < 44)).toBe(true);
    const atSeam = fa.find((r) => indexOf(r.file) === 43)!;
    expect(atSeam.footpoints.some((f) => Math.abs(f.spinBudget ?? 0) > 0)).toBe(true);
    expect(atSeam.pairMatrix.windingTurns.flat().some((w) => w !== null && Math.abs(w) > 1e-6)).toBe(true);
    const files = (await readdir(folder)).filter((f) => f.endsWith('.fits')).sort();
    let state: AnalysisState = {};
    let fresh: { id: number; x: number }[] = [];
    for (const f of files.slice(primerStart(files.map((_, i) => ({ time: i * 45e3, hasVelocity: false })), 44), 44)) {
      const r = analyseFrame(await loadFrameFile(join(folder, f)), state);
      state = r.state;
      if (r.footpoints) fresh = r.footpoints.footpoints;
    }
    const byX = (list: { id: number; x: number }[]) => [...list].sort((p, q) => p.x - q.x).map((p) => p.id);
    expect(fresh).toHaveLength(atSeam.footpoints.length);
    expect(byX(fresh)).not.toEqual(byX(atSeam.footpoints));
  });
});
