// The pure pieces of a survey: the manifest, Slurm's time limits (the forms the sbatch manual
// lists), the task list and sbatch's --array list, the batch script, the result codec (every
// double back exactly, NaN and typed arrays included), what a stopped task says, and the command
// line's strictness for the survey's steps.
import { describe, expect, it } from 'vitest';
import { main } from '../../server/cli.js';
import { batchScript, shellWord } from '../../replay/survey/batchScript.js';
import { parseManifest } from '../../replay/survey/manifest.js';
import { canonicalJson } from '../../replay/survey/provenance.js';
import { decodeResult, encodeResult } from '../../replay/survey/resultCodec.js';
import { formatSlurmTime, parseSlurmTime } from '../../replay/survey/slurmTime.js';
import { stopReason } from '../../replay/survey/surveyTask.js';
import { arraySpec, planTasks } from '../../replay/survey/taskPlan.js';
import { Collect } from './support.js';

describe('the manifest', () => {
  it('reads regions, folders or patterns, and optional configs; comments, blanks and quoted cells', () => {
    const rows = parseManifest('# survey of cycle 24\nregion,frames,config\n\nar-0412,/archive/ar 0412/\nar_0413,"/archive/a,b/*.Br.fits",lct.json\n', 'm.csv');
    expect(rows).toEqual([
      { name: 'ar-0412', frames: '/archive/ar 0412/', line: 4 },
      { name: 'ar_0413', frames: '/archive/a,b/*.Br.fits', config: 'lct.json', line: 5 },
    ]);
    expect(parseManifest('frames,region\nx/,r1\n', 'm.csv')).toEqual([{ name: 'r1', frames: 'x/', line: 2 }]);
  });

  it('names the line and the problem', () => {
    expect(() => parseManifest('', 'm.csv')).toThrow(/m\.csv: \(manifest\): is empty/);
    expect(() => parseManifest('region,folder\n', 'm.csv')).toThrow(/line 1: "folder" is not a column \(the columns are region, frames, config\)/);
    expect(() => parseManifest('region,config\n', 'm.csv')).toThrow(/the header has no "frames" column/);
    expect(() => parseManifest('region,frames\nar 1,x\n', 'm.csv')).toThrow(/line 2: "ar 1" is not a region name/);
    expect(() => parseManifest('region,frames\nar1,x\n\nar1,y\n', 'm.csv')).toThrow(/line 4: region ar1 is already on line 2/);
    expect(() => parseManifest('region,frames\nar1,\n', 'm.csv')).toThrow(/line 2: region ar1 has no frames/);
    expect(() => parseManifest('region,frames\nar1,x,y\n', 'm.csv')).toThrow(/line 2: has 3 cells, the header 2/);
    expect(() => parseManifest('region,frames\nar1,"x\n', 'm.csv')).toThrow(/line 2: a quoted cell is not closed/);
    expect(() => parseManifest('region,frames\n', 'm.csv')).toThrow(/lists no region/);
  });
});

describe('Slurm time limits', () => {
  it('reads every form sbatch --time takes and writes D-HH:MM:SS', () => {
    expect(parseSlurmTime('30')).toBe(1800);
    expect(parseSlurmTime('30:15')).toBe(1815);
    expect(parseSlurmTime('02:00:00')).toBe(7200);
    expect(parseSlurmTime('1-12')).toBe(129600);
    expect(parseSlurmTime('1-12:30')).toBe(131400);
    expect(parseSlurmTime('2-00:00:05')).toBe(172805);
    for (const bad of ['', 'x', '1:2:3:4', '0', '-5', '1h']) expect(() => parseSlurmTime(bad), bad).toThrow(/is not a Slurm time limit/);
    expect(formatSlurmTime(7200)).toBe('02:00:00');
    expect(formatSlurmTime(131400.2)).toBe('1-12:30:01');
    expect(parseSlurmTime(formatSlurmTime(93784))).toBe(93784);
  });
});

describe('the tasks', () => {
  it('one per region, a long region in contiguous chunks of at most chunkFrames with their primer frames, regions without frames left out', () => {
    // Each chunk's primer reaches 2 frames back here (a stand-in for chunkPriming's primerStart).
    const tasks = planTasks([{ name: 'a', frames: 5 }, { name: 'none', frames: 0 }, { name: 'b', frames: 11 }], 5, (_r, start) => start - 2);
    expect(tasks).toEqual([
      { id: 0, region: 'a', start: 0, end: 5, primerFrom: 0 },
      { id: 1, region: 'b', start: 0, end: 3, primerFrom: 0 }, { id: 2, region: 'b', start: 3, end: 7, primerFrom: 1 }, { id: 3, region: 'b', start: 7, end: 11, primerFrom: 5 },
    ]);
    expect(() => planTasks([], 0, () => 0)).toThrow(/positive integer/);
  });

  it('as sbatch --array lists them', () => {
    expect(arraySpec([0, 1, 2, 3])).toBe('0-3');
    expect(arraySpec([7, 3, 4, 9, 10, 11, 3])).toBe('3-4,7,9-11');
    expect(arraySpec([5])).toBe('5');
  });

  it('the batch script: one array task per task, its resources, the run command with the array index', () => {
    const s = batchScript({
      surveyDir: '/scratch/cycle 24', tasks: [0, 1, 2, 5], jobName: 'cycle24', time: '01:30:00', cpusPerTask: 4, memMB: 6000,
      partition: 'short', account: 'solar', maxParallel: 50, helicord: '/opt/node/bin/node /opt/helicord/bin/helicord.js',
    });
    const lines = s.split('\n');
    expect(lines[0]).toBe('#!/bin/bash');
    for (const l of ['#SBATCH --job-name=cycle24', '#SBATCH --array=0-2,5%50', '#SBATCH --cpus-per-task=4', '#SBATCH --time=01:30:00',
      '#SBATCH --mem=6000M', '#SBATCH --partition=short', '#SBATCH --account=solar', '#SBATCH --output=/scratch/cycle 24/logs/task-%a-job-%A.out']) {
      expect(lines).toContain(l);
    }
    // The allocator settings of replay/batchAllocator.ts, before the run, keeping the cluster's own.
    expect(lines.indexOf('export MALLOC_ARENA_MAX="${MALLOC_ARENA_MAX:-1}" MALLOC_MMAP_THRESHOLD_="${MALLOC_MMAP_THRESHOLD_:-2097152}"')).toBe(lines.length - 3);
    expect(lines).toContain(`exec /opt/node/bin/node /opt/helicord/bin/helicord.js survey run '/scratch/cycle 24' --task "$SLURM_ARRAY_TASK_ID" --workers "\${SLURM_CPUS_PER_TASK:-1}"`);
    const plain = batchScript({ surveyDir: '/s', tasks: [0], jobName: 'j', time: '10:00', cpusPerTask: 1, helicord: 'helicord' }).split('\n');
    expect(plain).toContain('#SBATCH --array=0');
    expect(plain.filter((l) => /^#SBATCH --(mem|partition|account)/.test(l))).toEqual([]);
    expect(shellWord("it's")).toBe(`'it'\\''s'`);
  });
});

describe('task results', () => {
  it('come back exactly: every double, NaN, the infinities, typed arrays, nested', () => {
    const value = {
      a: 0.1 + 0.2, b: -5.406453902886931e+38, c: Number.MIN_VALUE, d: NaN, e: [Infinity, -Infinity, 1e-320, -0],
      f: new Float64Array([1 / 3, NaN, -2.5e-300]), g: new Int32Array([-1, 7]), h: { $number: 1 }, s: 'NaN', n: null,
    };
    const back = decodeResult(encodeResult(value)) as typeof value;
    expect(back.a).toBe(value.a);
    expect(back.b).toBe(value.b);
    expect(back.c).toBe(value.c);
    expect(back.d).toBeNaN();
    expect(back.e.slice(0, 3)).toEqual([Infinity, -Infinity, 1e-320]);
    expect(back.f).toBeInstanceOf(Float64Array);
    expect(Array.from(back.f)).toEqual([1 / 3, NaN, -2.5e-300]);
    expect(back.g).toEqual(new Int32Array([-1, 7]));
    expect(back.h).toEqual({ $number: 1 });
    expect(back.s).toBe('NaN');
    expect(back.n).toBeNull();
  });

  it('settings digests do not depend on key order', () => {
    expect(canonicalJson({ b: 1, a: { d: [1, { f: 2, e: 3 }], c: undefined } })).toBe('{"a":{"d":[1,{"e":3,"f":2}]},"b":1}');
  });

  it('a task stopped at its limit timed out; before it, it was stopped', () => {
    expect(stopReason('SIGTERM', 3659.6, 3600)).toEqual({ timedOut: true, reason: 'timed out: stopped by SIGTERM after 3660 s, the time limit of a task being 01:00:00' });
    expect(stopReason('SIGTERM', 12, 3600)).toEqual({ timedOut: false, reason: 'stopped by SIGTERM after 12 s, before its time limit of 01:00:00 (cancelled, preempted or the node went down)' });
  });
});

describe('the command line of survey', () => {
  const cli = async (...argv: string[]) => {
    const out = new Collect(), err = new Collect();
    const code = await main(argv, out, err);
    return { code, out: out.text, err: err.text };
  };

  it('lists its steps, reads each step\'s options strictly, and says what is missing', async () => {
    expect(await cli('survey')).toMatchObject({ code: 2, err: expect.stringMatching(/helicord survey plan MANIFEST --out DIR[\s\S]*survey run DIR --local[\s\S]*survey merge DIR/) });
    expect(await cli('survey', 'plon')).toMatchObject({ code: 2, err: 'helicord survey: unknown step "plon" (did you mean plan?); the steps are plan, run, merge\n' });
    expect(await cli('survey', 'plan', 'm.csv', '--chunk-frame', '5')).toMatchObject({ code: 2, err: expect.stringMatching(/^helicord survey plan: unknown option --chunk-frame \(did you mean --chunk-frames\?\)/) });
    expect(await cli('survey', 'plan', 'm.csv')).toMatchObject({ code: 1, err: 'helicord survey plan: --out DIR is needed (the survey folder to write)\n' });
    expect(await cli('survey', 'plan', 'm.csv', '--out', '/nonexistent/x', '--time', '90 minutes')).toMatchObject({ code: 1, err: expect.stringMatching(/option --time: "90 minutes" is not a Slurm time limit/) });
    expect(await cli('survey', 'plan', '/nonexistent/m.csv', '--out', '/nonexistent/x')).toMatchObject({ code: 1, err: 'helicord survey plan: the file /nonexistent/m.csv does not exist.\n' });
    expect(await cli('survey', 'run', '/nonexistent', '--task', '-1')).toMatchObject({ code: 2 });
    expect(await cli('survey', 'run', '/nonexistent', '--local', '--task', '0')).toMatchObject({ code: 1, err: 'helicord survey run: give either --task N or --local, not both\n' });
    const saved = process.env.SLURM_ARRAY_TASK_ID;
    delete process.env.SLURM_ARRAY_TASK_ID;
    try {
      expect(await cli('survey', 'run', '/nonexistent')).toMatchObject({ code: 1, err: expect.stringMatching(/--task N is needed \(or --local\), unless SLURM_ARRAY_TASK_ID is set/) });
    } finally {
      if (saved !== undefined) process.env.SLURM_ARRAY_TASK_ID = saved;
    }
    expect(await cli('survey', 'merge', '/nonexistent')).toMatchObject({ code: 1, err: 'helicord survey merge: the file /nonexistent/survey.json does not exist.\n' });
    expect((await cli('survey', 'merge', '--help')).out).toMatch(/^Usage: helicord survey merge DIR/);
    expect((await cli('--help')).out).toMatch(/survey {3}a survey of many regions/);
  });
});
