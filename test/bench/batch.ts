// Batch throughput: frames per second of `process` over demo archives (FITS frames) of 256^2
// and 512^2, one worker against every core, with the peak resident memory of the run (workers
// are threads of the same process, so the RSS covers them). Frames carry the demo's velocities
// unless inference exists, in which case a second run without velocities is timed too. Each is
// run with the noise estimated from every frame (the default) and with the noise given. Every
// run is a process of its own (_batchChild.ts), with glibc's allocator as the launcher sets it
// for `process` (bin/helicord.js, its shell line) and, at 512^2 on every core, also as Node
// starts without it (`node bin/helicord.js`), to show what the setting is worth.
// HELICORD_BENCH_FRAMES overrides the frame counts (default 120 at 256^2, 60 at 512^2).

import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { synth } from '../../replay/synthCommand.js';

/** The allocator settings the launcher's shell line gives the batch commands (read from it: one source). */
export function launcherAllocatorEnv(launcher = fileURLToPath(new URL('../../../bin/helicord.js', import.meta.url))): Record<string, string> {
  const line = readFileSync(launcher, 'utf8').split('\n')[1] ?? '';
  const env: Record<string, string> = {};
  for (const m of line.matchAll(/(MALLOC_\w+)="\$\{\1:-([^}]*)\}"/g)) env[m[1]] = m[2];
  return env;
}

interface Run { s: number; cpu: number; peak: number }

/** One `process` run in a child with `allocator` added to an environment without glibc settings. */
function timed(folder: string, out: string, workers: number, allocator: Record<string, string>, config?: string): Run {
  const child = fileURLToPath(new URL('./_batchChild.js', import.meta.url));
  const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !k.startsWith('MALLOC_') && k !== 'GLIBC_TUNABLES'));
  const text = execFileSync(process.execPath, [child, folder, out, String(workers), ...(config !== undefined ? [config] : [])], {
    encoding: 'utf8', timeout: 1_800_000, env: { ...env, ...allocator },
  });
  return JSON.parse(text.trim().split('\n').pop()!) as Run;
}

export async function bench(): Promise<void> {
  const cores = availableParallelism();
  const launcher = launcherAllocatorEnv();
  console.log(`launcher allocator settings for process: ${Object.entries(launcher).map(([k, v]) => `${k}=${v}`).join(' ')}`);
  const override = Number(process.env.HELICORD_BENCH_FRAMES);
  const dir = await mkdtemp(join(tmpdir(), 'helicord-bench-'));
  // The same runs with the noise level given (--config), to show what the per-frame noise
  // estimate costs.
  const noiseGiven = join(dir, 'noise.json');
  await writeFile(noiseGiven, JSON.stringify({ analysis: { noiseG: 5 } }));
  try {
    for (const [size, defaultFrames] of [[256, 120], [512, 60]] as const) {
      const frames = override > 0 ? override : defaultFrames;
      for (const withVelocity of [true, false]) {
        const folder = join(dir, `a${size}${withVelocity ? 'v' : ''}`);
        // 12-minute frames from story hour 16 (the build-up) at the story's own pace.
        await synth({ out: folder, frames, size, withVelocity, demo: { cadenceS: 720, storyH: 72, storyStartH: 16 } });
        for (const config of [undefined, noiseGiven]) {
          for (const workers of [1, cores]) {
            // At 512^2 on every core, Node's own allocator settings too (the launcher's first).
            const allocators = size === 512 && workers === cores ? [launcher, {}] : [launcher];
            for (const allocator of allocators) {
              const r = timed(folder, join(dir, 'out.csv'), workers, allocator, config);
              console.log(`${size}^2 x ${frames} frames, ${withVelocity ? 'given velocities' : 'inferred velocities'}, noise ${config ? 'given' : 'estimated per frame'}, ${workers} worker${workers > 1 ? 's' : ''}, `
                + `allocator ${Object.keys(allocator).length > 0 ? 'as the launcher sets it' : "as Node starts (no MALLOC_ settings)"}: `
                + `${(frames / r.s).toFixed(2)} frames/s (${r.s.toFixed(1)} s, reading included), ${(r.cpu / frames).toFixed(2)} s CPU per frame, `
                + `peak RSS ${r.peak.toFixed(0)} MiB (load average ${loadavg().map((v) => v.toFixed(1)).join(' ')})`);
            }
          }
          if (!withVelocity) break;
        }
        await rm(folder, { recursive: true, force: true });
      }
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
