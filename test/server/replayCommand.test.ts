// `helicord replay` on the command line (server/commands/replayCommand.ts), run as a user runs it:
// the compiled launcher bin/helicord.js in its own process (`npm run build` first).
// Sources of the expectations: the command's help text and docs/replay.md (skipped files reported
// with their reason, as `process` does: replay/archiveOrder.ts); the stored region replayed with
// `--config` (the format of `process --config`, replay/processCommand.ts readBatchConfig) carries
// the configured noise level in every sample, and the original region is left as it was.
import { spawn } from 'node:child_process';
import type { ChildProcess } from 'node:child_process';
import { existsSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { synth } from '../../replay/synthCommand.js';
import { TOKEN, getJson, tempDir } from './support.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const launcher = join(root, 'bin', 'helicord.js');
const built = existsSync(join(root, 'dist', 'server', 'commands', 'replayCommand.js'));

interface Run { child: ChildProcess; url: Promise<string>; out: () => string; err: () => string; exit: Promise<number | null> }

function run(args: string[]): Run {
  const child = spawn(process.execPath, [launcher, ...args], { env: { ...process.env, HELICORD_TOKEN: TOKEN }, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '', err = '';
  const url = new Promise<string>((ok, fail) => {
    child.stdout!.on('data', (d) => {
      out += String(d);
      const m = /open (http:\/\/\S+)/.exec(out);
      if (m) ok(m[1]);
    });
    child.once('exit', (code) => fail(new Error(`exited ${code} before listening: ${out}\n${err}`)));
  });
  url.catch(() => undefined); // awaited by the tests that expect it
  child.stderr!.on('data', (d) => { err += String(d); });
  const exit = new Promise<number | null>((ok) => child.once('exit', (code) => ok(code)));
  return { child, url, out: () => out, err: () => err, exit };
}

interface RegionInfo { name: string; frames: number; settings: { analysis: Record<string, unknown> }; replay: { state: string; total: number; sent: number } | null }

async function waitReplayDone(url: string, region: string, timeoutMs = 60_000): Promise<RegionInfo> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const r = (await getJson<{ regions: RegionInfo[] }>(url, '/api/regions')).regions.find((x) => x.name === region);
    const h = await getJson<{ queue: number }>(url, '/api/health');
    if (r?.replay?.state === 'done' && h.queue === 0) return r;
    if (Date.now() > end) throw new Error(`replay into ${region} not done after ${timeoutMs} ms`);
    await new Promise((ok) => setTimeout(ok, 50));
  }
}

describe.skipIf(!built)('helicord replay (command line)', () => {
  let dir: string, folder: string, data: string;

  beforeAll(async () => {
    dir = tempDir('helicord-replay-cli-');
    folder = join(dir, 'frames');
    data = join(dir, 'data');
    await synth({ out: folder, frames: 12, size: 48, withVelocity: true, demo: { storyH: 72, storyStartH: 10, cadenceS: 720 } });
    writeFileSync(join(folder, 'broken.json'), '{ "time": "2026-03-14T00:00:00Z", "nx": ');
    writeFileSync(join(dir, 'noisy.json'), JSON.stringify({ analysis: { noiseG: 30 } }));
  }, 60_000);

  afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });

  it('feeds a folder into a region, reports the skipped file, and stops on SIGTERM', async () => {
    const r = run(['replay', folder, '--region', 'cli', '--speed', '0', '--data', data, '--port', '0', '--workers', '1']);
    try {
      const url = await r.url;
      const info = await waitReplayDone(url, 'cli');
      expect(info).toMatchObject({ frames: 12, replay: { total: 12, sent: 12 } });
      expect(r.err()).toMatch(/12 frames to replay, skipped 1/);
      expect(r.err()).toMatch(/skipped .*broken\.json: /);
      expect((await getJson<{ samples: unknown[] }>(url, '/api/regions/cli/series')).samples).toHaveLength(12);
    } finally {
      r.child.kill('SIGTERM');
    }
    expect(await r.exit).toBe(0);
    expect(r.out()).toMatch(/stopping/);
  }, 90_000);

  it('run again on the same data, goes on after the frames the region holds (nothing sent twice)', async () => {
    const r = run(['replay', folder, '--region', 'cli', '--speed', '0', '--data', data, '--port', '0', '--workers', '1']);
    try {
      const url = await r.url;
      const info = await waitReplayDone(url, 'cli');
      expect(info).toMatchObject({ frames: 12, replay: { state: 'done', total: 12, sent: 0 } });
      expect(r.out()).toMatch(/from frame 12/);
    } finally {
      r.child.kill('SIGTERM');
    }
    expect(await r.exit).toBe(0);
  }, 90_000);

  it('replays the stored region with --config into a new region beside it', async () => {
    const r = run(['replay', '--from-region', 'cli', '--region', 'cli-noisy', '--config', join(dir, 'noisy.json'), '--speed', '0', '--data', data, '--port', '0', '--workers', '1']);
    try {
      const url = await r.url;
      const info = await waitReplayDone(url, 'cli-noisy');
      expect(info.settings.analysis).toEqual({ noiseG: 30 });
      const noisy = (await getJson<{ samples: { time: string; noise_g: number }[] }>(url, '/api/regions/cli-noisy/series')).samples;
      const original = (await getJson<{ samples: { time: string; noise_g: number }[] }>(url, '/api/regions/cli/series')).samples;
      expect(noisy.map((s) => s.time)).toEqual(original.map((s) => s.time));
      expect(noisy.every((s) => s.noise_g === 30)).toBe(true);
      expect(original.some((s) => s.noise_g === 30)).toBe(false);
      const cli = (await getJson<{ regions: RegionInfo[] }>(url, '/api/regions')).regions.find((x) => x.name === 'cli')!;
      expect(cli.frames).toBe(12);
      expect(cli.replay).toBeNull(); // the original is not a replay in this run
    } finally {
      r.child.kill('SIGTERM');
    }
    expect(await r.exit).toBe(0);
  }, 90_000);

  it('explains what is missing', async () => {
    const r = run(['replay', folder, '--data', data, '--port', '0']);
    expect(await r.exit).toBe(1);
    expect(r.err()).toMatch(/--region NAME/);
    const both = run(['replay', folder, '--from-region', 'cli', '--region', 'x', '--data', data, '--port', '0']);
    expect(await both.exit).toBe(1);
    expect(both.err()).toMatch(/either a FOLDER or --from-region/);
  }, 30_000);
});
