// A survey on a real Slurm (Debian's slurmctld, slurmd and munge; a one-node cluster started by
// slurmCluster.ts): the plan's batch script is submitted as a job array, each array task runs
// `helicord survey run DIR --task $SLURM_ARRAY_TASK_ID` in its own process, and the merged survey
// table and region series equal `survey run --local` over the same plan to rounding. Then one
// task is cancelled mid-way (scancel): it records why, the merge reports its region with the
// reason and prints the tasks to submit again; resubmitting the whole array reruns only that task
// and the merge is unchanged. A task held past its time limit is stopped by Slurm and reported as
// timed out. Without Slurm this file skips loudly; with CI=true it fails.
import { cp, mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { existsSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { planSurvey } from '../../replay/survey/surveyPlan.js';
import { runLocal } from '../../replay/survey/surveyRun.js';
import { mergeSurvey } from '../../replay/survey/surveyMerge.js';
import type { SurveyPlan } from '../../replay/survey/surveyFolder.js';
import { readResult, scriptPath, startedPath } from '../../replay/survey/surveyFolder.js';
import { ensureCompiledCli } from '../replay/compiledWorker.js';
import type { SlurmCluster } from './slurmCluster.js';
import { slurmMissing, startSlurmCluster } from './slurmCluster.js';
import { demoLike, expectSameTable, quiet } from './support.js';

const missing = slurmMissing();
if (missing) {
  if (process.env.CI === 'true') throw new Error(`Slurm is required in CI: ${missing}`);
  console.warn(`SKIPPING the survey tests on a real Slurm: ${missing}`);
}

let dir: string, plan: SurveyPlan, cluster: SlurmCluster | undefined, stuckJob: string;
/** The plan folder as made, before any task ran (copied for each run). */
const pristine = () => join(dir, 'plan');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function freshCopy(name: string): Promise<string> {
  const to = join(dir, name);
  await cp(pristine(), to, { recursive: true });
  return to;
}

/** The tables a merge wrote: the survey CSV and each region's CSV. */
async function tables(survey: string): Promise<Record<string, string>> {
  const out: Record<string, string> = { survey: await readFile(join(survey, 'merged', 'survey.csv'), 'utf8') };
  for (const f of (await readdir(join(survey, 'merged', 'regions'))).filter((n) => n.endsWith('.csv'))) out[f] = await readFile(join(survey, 'merged', 'regions', f), 'utf8');
  return out;
}

function expectSameTables(a: Record<string, string>, b: Record<string, string>): void {
  expect(Object.keys(b).sort()).toEqual(Object.keys(a).sort());
  for (const k of Object.keys(a)) expectSameTable(a[k], b[k], k);
}

beforeAll(async () => {
  if (missing) return;
  // The array tasks start bin/helicord.js: the command line must be compiled.
  ensureCompiledCli();
  dir = await mkdtemp(join(tmpdir(), 'helicord-slurm-survey-'));
  // Four demo-like regions of 64^2 pixels; ar-4 is long enough to be cut into two tasks of 20 frames.
  const regions = [['ar-1', 8], ['ar-2', 8], ['ar-3', 10], ['ar-4', 40]] as const;
  for (const [i, [name, frames]] of regions.entries()) await demoLike(join(dir, 'frames', name), frames, i + 1);
  const manifest = join(dir, 'manifest.csv');
  await writeFile(manifest, ['region,frames', ...regions.map(([n]) => `${n},frames/${n}`), ''].join('\n'));
  plan = await planSurvey({ manifest, out: pristine(), chunkFrames: 20, timeLimitS: 600, cpusPerTask: 1, workers: 2, progress: quiet() });
  cluster = await startSlurmCluster();
  // Submitted first, so that its minute runs beside the other tests: one region whose frame 3
  // hangs whoever reads it (a named pipe nobody writes), put in after the plan, and a limit of one
  // minute (Slurm's smallest; it signals the task within about 30 s past it).
  const stuck = join(dir, 'frames', 'ar-stuck');
  await cp(join(dir, 'frames', 'ar-1'), stuck, { recursive: true });
  await writeFile(join(dir, 'stuck.csv'), `region,frames\nar-stuck,${stuck}\n`);
  await planSurvey({ manifest: join(dir, 'stuck.csv'), out: join(dir, 'stuck'), chunkFrames: 20, timeLimitS: 60, cpusPerTask: 1, workers: 1, progress: quiet() });
  await rm(join(stuck, 'demo_0003.fits'));
  execFileSync('mkfifo', [join(stuck, 'demo_0003.fits')]);
  stuckJob = await cluster.submit(scriptPath(join(dir, 'stuck')));
}, 180_000);

afterAll(async () => {
  await cluster?.stop();
  if (dir) await rm(dir, { recursive: true, force: true });
}, 60_000);

describe.skipIf(missing !== undefined)('a survey on a real Slurm', () => {
  let reference: Record<string, string>;

  it('runs as a job array whose merge equals run --local on the same plan', async () => {
    expect(plan.tasks.map((t) => [t.region, t.start, t.end, t.primerFrom])).toEqual([['ar-1', 0, 8, 0], ['ar-2', 0, 8, 0], ['ar-3', 0, 10, 0], ['ar-4', 0, 20, 0], ['ar-4', 20, 40, 15]]);
    // The plan's own batch script, submitted from its folder (the survey folder it names is pristine()).
    const job = await cluster!.submit(scriptPath(pristine()));
    await cluster!.waitDone(job);
    for (const t of plan.tasks) {
      const r = await readResult(pristine(), t.id);
      const log = await readFile(join(pristine(), 'logs', `task-${t.id}-job-${job}.out`), 'utf8').catch((e: Error) => `(no log: ${e.message})`);
      expect(r?.status, `task ${t.id}: ${r?.status === 'failed' ? r.reason : 'no result'}; its log:\n${log}`).toBe('complete');
      if (r?.status === 'complete') expect(r.provenance.slurm).toMatchObject({ SLURM_ARRAY_JOB_ID: job, SLURM_ARRAY_TASK_ID: String(t.id) });
    }
    const merged = await mergeSurvey(pristine(), { progress: quiet() });
    expect(merged.rows.map((r) => [r.region, r.status, r.frames_used])).toEqual([['ar-1', 'ok', 8], ['ar-2', 'ok', 8], ['ar-3', 'ok', 10], ['ar-4', 'ok', 40]]);
    reference = await tables(pristine());

    // The same plan, run here. The plan names its folder in the batch script only: a copy runs anywhere.
    const local = await freshCopy('local');
    for (const f of await readdir(join(local, 'results'))) await rm(join(local, 'results', f));
    expect(await runLocal(local, { workers: 2, progress: quiet() })).toEqual({ done: 5, failed: 0, skipped: 0 });
    await mergeSurvey(local, { progress: quiet() });
    expectSameTables(reference, await tables(local));
  }, 300_000);

  it('reruns only a task cancelled mid-way, and merges to the same tables', async () => {
    // The results of the first run go; the same folder is submitted again from scratch.
    const survey = pristine();
    for (const f of await readdir(join(survey, 'results'))) await rm(join(survey, 'results', f));
    await rm(join(survey, 'merged'), { recursive: true, force: true });
    const job = await cluster!.submit(scriptPath(survey));
    // Task 4 (ar-4, frames 20-39) is cancelled as soon as it has started.
    const deadline = Date.now() + 120_000;
    while (!existsSync(startedPath(survey, 4))) {
      if (Date.now() > deadline) throw new Error('task 4 did not start within 120 s');
      await sleep(100);
    }
    await cluster!.cmd('scancel', [`${job}_4`]);
    await cluster!.waitDone(job);
    const cancelled = await readResult(survey, 4);
    expect(cancelled).toMatchObject({ status: 'failed', timedOut: false, reason: expect.stringMatching(/^stopped by SIGTERM after \d+ s, before its time limit of 00:10:00/) });
    const partial = await mergeSurvey(survey, { progress: quiet() });
    expect(partial.rerun).toEqual([4]);
    expect(partial.rows.find((r) => r.region === 'ar-4')).toMatchObject({ status: 'incomplete', problem: expect.stringMatching(/^task 4: stopped by SIGTERM/) });
    expect(partial.rows.filter((r) => r.status === 'ok').map((r) => r.region)).toEqual(['ar-1', 'ar-2', 'ar-3']);

    // The whole array again: the complete tasks do nothing (their results stay as they were).
    const kept = await Promise.all([0, 1, 2, 3].map((id) => readFile(join(survey, 'results', `task-0000${id}.json`), 'utf8')));
    const again = await cluster!.submit(scriptPath(survey));
    await cluster!.waitDone(again);
    expect(await Promise.all([0, 1, 2, 3].map((id) => readFile(join(survey, 'results', `task-0000${id}.json`), 'utf8')))).toEqual(kept);
    const logs = await readFile(join(survey, 'logs', `task-0-job-${again}.out`), 'utf8');
    expect(logs).toMatch(/task 0 \(region ar-1, frames 0-7\): its result is complete already; nothing to do/);
    const rerun = await readResult(survey, 4);
    expect(rerun?.status, rerun?.status === 'failed' ? rerun.reason : '').toBe('complete');
    expect((await mergeSurvey(survey, { progress: quiet() })).rerun).toEqual([]);
    expectSameTables(reference, await tables(survey));
  }, 300_000);

  it('reports a task stopped by Slurm at its time limit as timed out', async () => {
    const survey = join(dir, 'stuck');
    await cluster!.waitDone(stuckJob, 240_000);
    expect(await readResult(survey, 0)).toMatchObject({
      status: 'failed', timedOut: true, reason: expect.stringMatching(/^timed out: stopped by SIGTERM after \d+ s, the time limit of a task being 00:01:00$/),
    });
    const merged = await mergeSurvey(survey, { progress: quiet() });
    expect(merged.rows).toMatchObject([{ region: 'ar-stuck', status: 'incomplete', problem: expect.stringMatching(/^task 0: timed out: stopped by SIGTERM/) }]);
    expect(merged.rerun).toEqual([0]);
  }, 300_000);
});
