// A survey run on this machine (`survey run --local`): each region's merged series equals
// `process` over the same folder (a region cut into three tasks included: every frame once, the
// footpoints stitched at the seams), the survey table is read from those series, bad input is
// reported per region with its reason (a missing folder, an empty folder, a folder of unreadable
// frames, a corrupt frame, a task that times out) while the other regions are unaffected, a rerun
// does only what is not complete, and the merge refuses results of another version or other
// settings and a frame reported by two tasks. The reference is the project's own `process`.
import { closeSync, constants, openSync } from 'node:fs';
import { copyFile, mkdir, mkdtemp, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { processFolder } from '../../replay/processCommand.js';
import { planSurvey } from '../../replay/survey/surveyPlan.js';
import { runLocal, runTask } from '../../replay/survey/surveyRun.js';
import { mergeSurvey } from '../../replay/survey/surveyMerge.js';
import type { CompleteResult, SurveyPlan } from '../../replay/survey/surveyFolder.js';
import { readResult, resultPath, startedPath, writeResult } from '../../replay/survey/surveyFolder.js';
import type { SurveyRow } from '../../replay/survey/surveyTable.js';
import { ensureCompiledWorker } from '../replay/compiledWorker.js';
import { csvRows, demoLike, expectSameTable, quiet } from './support.js';

let dir: string, survey: string, plan: SurveyPlan;
const slowFrame = () => join(dir, 'slow', 'demo_0003.fits');

/** Lets a reader blocked on the FIFO go (an end of file), if one is waiting. */
function releaseFifo(path: string): void {
  try {
    closeSync(openSync(path, constants.O_WRONLY | constants.O_NONBLOCK));
  } catch {
    // no reader waiting
  }
}

beforeAll(async () => {
  ensureCompiledWorker();
  dir = await mkdtemp(join(tmpdir(), 'helicord-survey-'));
  await demoLike(join(dir, 'a'), 8, 1);
  await demoLike(join(dir, 'b'), 14, 2);
  await demoLike(join(dir, 'corrupt'), 8, 3);
  await demoLike(join(dir, 'slow'), 6, 4);
  await mkdir(join(dir, 'empty'));
  await mkdir(join(dir, 'allbad'));
  // A frame cut short (a transfer that stopped), and a folder of nothing but such frames.
  const cut = async (file: string) => writeFile(file, (await readFile(file)).subarray(0, 2000));
  await cut(join(dir, 'corrupt', 'demo_0002.fits'));
  for (const f of ['demo_0000.fits', 'demo_0001.fits']) { await copyFile(join(dir, 'a', f), join(dir, 'allbad', f)); await cut(join(dir, 'allbad', f)); }
  await writeFile(join(dir, 'manifest.csv'), [
    '# a survey of our own demo-like regions',
    'region,frames',
    'ar-a,a',
    'ar-b,b/*.fits',
    'ar-corrupt,corrupt',
    'ar-slow,slow',
    'ar-missing,not-there',
    'ar-empty,empty',
    'ar-allbad,allbad',
    '',
  ].join('\n'));
  survey = join(dir, 'survey');
  // At most 6 frames a task: a and corrupt in two tasks, b in three (frames 0-3, 4-8, 9-13). 15 s a task.
  plan = await planSurvey({ manifest: join(dir, 'manifest.csv'), out: survey, chunkFrames: 6, timeLimitS: 15, cpusPerTask: 1, workers: 2, progress: quiet() });
}, 120_000);

afterAll(async () => {
  releaseFifo(slowFrame());
  await rm(dir, { recursive: true, force: true });
});

const rowOf = async (name: string): Promise<SurveyRow> => {
  const table = JSON.parse(await readFile(join(survey, 'merged', 'survey.json'), 'utf8')) as { regions: SurveyRow[] };
  return table.regions.find((r) => r.region === name)!;
};

describe('survey plan', () => {
  it('makes one task per region, a long one cut into chunks, and keeps the reason of a region without frames', () => {
    expect(plan.tasks.map((t) => [t.region, t.start, t.end])).toEqual([
      ['ar-a', 0, 4], ['ar-a', 4, 8], ['ar-b', 0, 4], ['ar-b', 4, 9], ['ar-b', 9, 14], ['ar-corrupt', 0, 3], ['ar-corrupt', 3, 7], ['ar-slow', 0, 6],
    ]);
    // At 720 s a chunk is primed with the pair partners of the four frames tracked before it
    // (chunkPriming.ts): 5 frames back, or from the region's first frame when it starts sooner.
    expect(plan.tasks.map((t) => t.primerFrom)).toEqual([0, 0, 0, 0, 4, 0, 0, 0]);
    const problems = Object.fromEntries(plan.regions.map((r) => [r.name, r.problem ?? null]));
    expect(problems['ar-a']).toBeNull();
    expect(problems['ar-missing']).toMatch(/not-there does not exist/);
    expect(problems['ar-empty']).toMatch(/empty holds no frame files/);
    expect(problems['ar-allbad']).toMatch(/no usable frame among 2 file\(s\) \(.*demo_0000\.fits: /);
    expect(plan.regions.find((r) => r.name === 'ar-corrupt')!.skippedCount).toBe(1);
  });

  it('gives each region the survey\'s config or its own; a config file that is refused is that region\'s reason', async () => {
    await writeFile(join(dir, 'survey-config.json'), JSON.stringify({ budget: { gapFactor: 4 } }));
    await writeFile(join(dir, 'lct.json'), JSON.stringify({ analysis: { velocity: { method: 'lct' } } }));
    await writeFile(join(dir, 'wrong.json'), JSON.stringify({ method: 'lct' }));
    await writeFile(join(dir, 'configs.csv'), 'region,frames,config\nr-plain,a\nr-lct,a,lct.json\nr-wrong,a,wrong.json\n');
    const p = await planSurvey({ manifest: join(dir, 'configs.csv'), config: join(dir, 'survey-config.json'), out: join(dir, 'configs'), chunkFrames: 50, timeLimitS: 60, cpusPerTask: 1, workers: 1, progress: quiet() });
    const [plain, lct, wrong] = p.regions;
    expect(plain.settings).toMatchObject({ budget: { gapFactor: 4 }, analysis: {} });
    expect(lct.settings).toMatchObject({ budget: {}, analysis: { velocity: { method: 'lct' } } });
    expect(lct.settingsDigest).not.toBe(plain.settingsDigest);
    expect(wrong.problem).toMatch(/wrong\.json: method: is not a setting; it belongs at analysis\.velocity\.method/);
    expect(p.tasks.map((t) => t.region)).toEqual(['r-plain', 'r-lct']);
  });

  it('refuses to plan over a survey folder that holds a plan', async () => {
    await expect(planSurvey({ manifest: join(dir, 'manifest.csv'), out: survey, chunkFrames: 6, timeLimitS: 15, cpusPerTask: 1, progress: quiet() }))
      .rejects.toThrow(/already holds a survey plan/);
  });
});

describe('survey run --local and merge', () => {
  it('merges each region as process computes it; bad input is reported per region; a task past its limit times out', async () => {
    // A frame that hangs whoever reads it (a named pipe nobody writes), put in after the plan.
    const saved = join(dir, 'slow-frame.fits');
    await copyFile(slowFrame(), saved);
    await rm(slowFrame());
    execFileSync('mkfifo', [slowFrame()]);
    const r = await runLocal(survey, { workers: 2, progress: quiet() });
    releaseFifo(slowFrame());
    expect(r).toEqual({ done: 7, failed: 1, skipped: 0 });
    const merged = await mergeSurvey(survey, { progress: quiet() });
    expect(merged.rerun).toEqual([7]);

    for (const name of ['a', 'b']) {
      const out = join(dir, `process-${name}.csv`);
      await processFolder({ folder: join(dir, name), out, workers: 2, progress: quiet() });
      const want = await readFile(out, 'utf8');
      const got = await readFile(join(survey, 'merged', 'regions', `ar-${name}.csv`), 'utf8');
      expectSameTable(want, got, `region ${name}`);
      // Every frame once: one sample per frame after the first.
      expect(csvRows(got).length - 1).toBe(name === 'a' ? 7 : 13);
    }

    // The table row of a region is read from its series.
    const b = await rowOf('ar-b');
    const rows = csvRows(await readFile(join(survey, 'merged', 'regions', 'ar-b.csv'), 'utf8'));
    const col = (c: string) => rows[0].indexOf(c);
    const body = rows.slice(1);
    const last = body.at(-1)!;
    const peak = body.reduce((p, q) => (Math.abs(Number(q[col('rate_total')])) > Math.abs(Number(p[col('rate_total')])) ? q : p));
    expect(b).toMatchObject({ status: 'ok', problem: null, frames_planned: 14, frames_used: 14, frames_skipped: 0, samples: 13, gaps: 0 });
    expect(b.peak_rate).toBe(Number(peak[col('rate_total')]));
    expect(b.peak_rate_time).toBe(peak[col('time')]);
    expect(b.peak_rate_sigma).toBe(Number(peak[col('sigma_rate_total')]));
    expect(b.budget_total).toBe(Number(last[col('budget_total')]));
    expect(b.budget_sigma).toBe(Number(last[col('sigma_budget_total')]));
    expect(b.spin_share).toBeCloseTo(Number(last[col('budget_spin')]) / Number(last[col('budget_total')]), 12);
    expect(b.orbit_share).toBeCloseTo(Number(last[col('budget_orbit')]) / Number(last[col('budget_total')]), 12);
    expect(b.flux_unsigned).toBe(Number(last[col('flux_unsigned')]));
    expect(b.budget_normalised).toBe(Number(last[col('budget_normalised')]));
    // The demo's rate passes the peak-rate level (6e36 Mx^2/s) in its first hours.
    expect(b.thresholds_crossed.map((c) => c.rule)).toContain('peak-rate');
    const json = JSON.parse(await readFile(join(survey, 'merged', 'regions', 'ar-b.json'), 'utf8'));
    expect(json.provenance.tasks.map((t: { task: number }) => t.task)).toEqual([2, 3, 4]);
    expect(json.provenance.inputs).toHaveLength(14);
    expect(json.provenance.inputs[0].sha256).toMatch(/^[0-9a-f]{64}$/);

    const corrupt = await rowOf('ar-corrupt');
    expect(corrupt).toMatchObject({ status: 'ok', frames_planned: 7, frames_used: 7, frames_skipped: 1, samples: 6 });
    expect(corrupt.problem).toMatch(/skipped .*demo_0002\.fits: /);
    expect(await rowOf('ar-slow')).toMatchObject({ status: 'incomplete', frames_used: null });
    expect((await rowOf('ar-slow')).problem).toMatch(/^task 7: timed out: stopped after 1\d s, the time limit of a task being 00:00:15$/);
    expect(await rowOf('ar-missing')).toMatchObject({ status: 'no-data', problem: expect.stringMatching(/does not exist/) });
    expect(await rowOf('ar-empty')).toMatchObject({ status: 'no-data', problem: expect.stringMatching(/holds no frame files/) });
    expect(await rowOf('ar-allbad')).toMatchObject({ status: 'no-data', problem: expect.stringMatching(/no usable frame/) });
    // The CSV says the same, one line per region in manifest order.
    const table = csvRows(await readFile(join(survey, 'merged', 'survey.csv'), 'utf8'));
    expect(table.slice(1).map((l) => l[0])).toEqual(['ar-a', 'ar-b', 'ar-corrupt', 'ar-slow', 'ar-missing', 'ar-empty', 'ar-allbad']);

    // The frame back: a second run does the one task left and nothing else.
    await rm(slowFrame());
    await copyFile(saved, slowFrame());
    const before = await stat(resultPath(survey, 0));
    expect(await runLocal(survey, { workers: 2, progress: quiet() })).toEqual({ done: 1, failed: 0, skipped: 7 });
    expect((await stat(resultPath(survey, 0))).mtimeMs).toBe(before.mtimeMs);
    expect(await runTask(survey, 0, { progress: quiet() })).toBe('skipped');
    const again = await mergeSurvey(survey, { progress: quiet() });
    expect(again.rerun).toEqual([]);
    expect(await rowOf('ar-slow')).toMatchObject({ status: 'ok', frames_used: 6, samples: 5 });
    expect(await rowOf('ar-a')).toEqual(merged.rows.find((x) => x.region === 'ar-a'));

    // A task's own summary: the region's series when it covers the whole region; for a chunk,
    // the same rates with a budget from zero at its first frame.
    const slow = (await readResult(survey, 7)) as CompleteResult;
    const slowRows = csvRows(await readFile(join(survey, 'merged', 'regions', 'ar-slow.csv'), 'utf8'));
    expect(slow.summary).toMatchObject({ wholeRegion: true, framesUsed: 6 });
    expect(slow.summary.series.map((r) => [r.time, r.rate_total, r.budget_total])).toEqual(slowRows.slice(1).map((l) => [l[0], Number(l[2]), Number(l[6])]));
    expect(slow.summary.alertCrossings).toEqual((await rowOf('ar-slow')).thresholds_crossed);
    expect(slow.summary.footpoints!.count).toBe(slow.summary.footpoints!.rows.length);
    const middle = (await readResult(survey, 3)) as CompleteResult;
    expect(middle.summary.wholeRegion).toBe(false);
    expect(middle.summary.note).toMatch(/^frames 4-8 of 14: budget and alerts from zero/);
    const bRows = csvRows(await readFile(join(survey, 'merged', 'regions', 'ar-b.csv'), 'utf8')).slice(1);
    expect(middle.summary.series.map((r) => [r.time, r.rate_total])).toEqual(bRows.slice(3, 8).map((l) => [l[0], Number(l[2])]));
    expect(middle.summary.series[0].budget_total).not.toBe(Number(bRows[3][6]));
  }, 180_000);

  it('refuses results of another version or other settings, and a frame reported by two tasks', async () => {
    const original = (await readResult(survey, 3)) as CompleteResult;
    expect(original.status).toBe('complete');
    try {
      await writeResult(survey, { ...original, provenance: { ...original.provenance, version: '0.0.0-elsewhere' } });
      await expect(mergeSurvey(survey, { progress: quiet() })).rejects.toThrow(/different helicord versions \(.*0\.0\.0-elsewhere: task\(s\) 3/);
      await writeResult(survey, { ...original, provenance: { ...original.provenance, settingsDigest: 'f'.repeat(64) } });
      await expect(mergeSurvey(survey, { progress: quiet() })).rejects.toThrow(/task 3 \(region ar-b\) was made with other settings/);
      // Task 3 (frames 4-8) also reporting frame 3, the last of task 2; or its own frame 4 twice.
      const before = (await readResult(survey, 2)) as CompleteResult;
      const lastOfTask2 = before.chunks.at(-1)!.outcomes.at(-1)!;
      expect(lastOfTask2.index).toBe(3);
      const withFirst = async (extra: CompleteResult['chunks'][number]['outcomes'][number]) => {
        await writeResult(survey, { ...original, chunks: [{ ...original.chunks[0], outcomes: [extra, ...original.chunks[0].outcomes] }, ...original.chunks.slice(1)] });
        return (await mergeSurvey(survey, { progress: quiet() })).rows;
      };
      let rows = await withFirst(lastOfTask2);
      expect(rows.find((x) => x.region === 'ar-b')).toMatchObject({ status: 'incomplete', problem: 'task 3 reports frame 3, outside its frames 4-8' });
      rows = await withFirst(original.chunks[0].outcomes[0]);
      expect(rows.find((x) => x.region === 'ar-b')).toMatchObject({ status: 'incomplete', problem: expect.stringMatching(/^frame 4 \(.*demo_0004\.fits\) is reported twice by task 3$/) });
      const r = { rows };
      expect(r.rows.find((x) => x.region === 'ar-a')!.status).toBe('ok');
    } finally {
      await writeResult(survey, original);
    }
    expect((await mergeSurvey(survey, { progress: quiet() })).rerun).toEqual([]);
  }, 60_000);

  it('says of a task without a result whether it started (and where) or never ran', async () => {
    const kept = (await readResult(survey, 0)) as CompleteResult;
    const started = await readFile(startedPath(survey, 0), 'utf8');
    try {
      await rm(resultPath(survey, 0));
      let r = await mergeSurvey(survey, { progress: quiet() });
      expect(r.rerun).toEqual([0]);
      expect(r.rows[0]).toMatchObject({ region: 'ar-a', status: 'incomplete', problem: expect.stringMatching(/^task 0: started \d{4}-\d\d-\d\dT[\d:.]+Z on \S+ and left no result \(killed, out of memory, or still running\)$/) });
      await rm(startedPath(survey, 0));
      r = await mergeSurvey(survey, { progress: quiet() });
      expect(r.rows[0].problem).toBe('task 0: not run yet');
      expect(r.rows.find((x) => x.region === 'ar-b')!.status).toBe('ok');
    } finally {
      await writeResult(survey, kept);
      await writeFile(startedPath(survey, 0), started);
    }
  });
});
