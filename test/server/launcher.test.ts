// The launcher bin/helicord.js run as a program, as `npx helicord` runs it: its first line makes the
// shell start it, its second (a string and a comment to Node) sets glibc's allocator for the batch
// commands only and starts Node on the same file. Expectations from the launcher's own comment and
// docs/speed.md (ninth round): MALLOC_ARENA_MAX=1 and MALLOC_MMAP_THRESHOLD_=2097152 for `process`
// and `survey`, nothing for the monitor, values the caller set kept; the same values as the
// survey's batch script (replay/batchAllocator.ts), and the batch benchmark reads them from the
// launcher. A stand-in `node` first on PATH prints what it was given.
import { execFileSync } from 'node:child_process';
import { chmodSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { launcherAllocatorEnv } from '../bench/batch.js';
import { BATCH_ALLOCATOR } from '../../replay/batchAllocator.js';

const launcher = fileURLToPath(new URL('../../bin/helicord.js', import.meta.url));
const stubDir = mkdtempSync(join(tmpdir(), 'helicord-launcher-'));
writeFileSync(join(stubDir, 'node'), '#!/bin/sh\necho "arena=$MALLOC_ARENA_MAX mmap=$MALLOC_MMAP_THRESHOLD_ args=$*"\n');
chmodSync(join(stubDir, 'node'), 0o755);
afterAll(() => rmSync(stubDir, { recursive: true, force: true }));

/** What the stand-in node saw when the launcher ran with `args` (and `extra` in the environment). */
function seen(args: string[], extra: Record<string, string> = {}): string {
  const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !k.startsWith('MALLOC_')));
  return execFileSync(launcher, args, { encoding: 'utf8', env: { ...env, ...extra, PATH: `${stubDir}:${process.env.PATH}` } }).trim();
}

describe('launcher', () => {
  it('sets one arena and a fixed 2 MiB mmap threshold for process and survey, and passes the arguments on', () => {
    expect(seen(['process', 'frames', '--out', 'r.csv'])).toBe(`arena=1 mmap=2097152 args=${launcher} process frames --out r.csv`);
    expect(seen(['survey', 'run', 'plan dir'])).toBe(`arena=1 mmap=2097152 args=${launcher} survey run plan dir`);
  });

  it('leaves the monitor and the other commands with Node\'s own allocator settings', () => {
    for (const command of ['serve', 'rate', 'replay', 'synth']) expect(seen([command, '--help'])).toBe(`arena= mmap= args=${launcher} ${command} --help`);
  });

  it('keeps values the caller set', () => {
    expect(seen(['process', 'f'], { MALLOC_ARENA_MAX: '4' })).toBe(`arena=4 mmap=2097152 args=${launcher} process f`);
  });

  it('says what the survey scripts set, and is what the batch benchmark measures', () => {
    expect(launcherAllocatorEnv(launcher)).toEqual({ MALLOC_ARENA_MAX: '1', MALLOC_MMAP_THRESHOLD_: '2097152' });
    expect(launcherAllocatorEnv(launcher)).toEqual(BATCH_ALLOCATOR);
  });

  it('runs the real command line when started as a program (Node reads the shell line as a string)', () => {
    const env = { ...process.env, PATH: `${dirname(process.execPath)}:${process.env.PATH}` };
    const help = execFileSync(launcher, ['process', '--help'], { encoding: 'utf8', env });
    expect(help).toMatch(/^Usage: helicord process FOLDER/m);
    expect(execFileSync(process.execPath, [launcher, '--help'], { encoding: 'utf8' })).toMatch(/^Usage: helicord <command>/m);
  });
});
