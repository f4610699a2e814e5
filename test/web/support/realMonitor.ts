// The real monitor (dist/server/serve.js, compiled by `npm run build`) in a child process with the
// built-in demo region streaming fast, so a test can stop it and start it again on the same port
// and data folder, as an operator restarting the service would.

import { freePort } from '../../support/freePort.js';
export { freePort } from '../../support/freePort.js';
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

export function realServePath(root: string): string {
  return join(root, 'dist', 'server', 'serve.js');
}

export function realMonitorAvailable(root: string): boolean {
  return existsSync(realServePath(root));
}


export class RealMonitor {
  private child: ChildProcess | undefined;
  url = '';
  log = '';

  constructor(
    private readonly root: string, readonly dataDir: string, readonly port: number, private readonly demoIntervalMs = 60,
    /** Without the demo (an empty monitor), or with a folder of frames replayed into a region as `helicord replay` does. */
    private readonly setup: { demo?: boolean; replay?: { region: string; folder: string; speed: number } } = {},
  ) {}

  /** The bearer token the monitor made at first start (kept in its data folder). */
  token(): string {
    return readFileSync(join(this.dataDir, 'token'), 'utf8').trim();
  }

  async start(): Promise<void> {
    const replay = this.setup.replay;
    const archiveModule = pathToFileURL(join(this.root, 'dist', 'replay', 'archiveSource.js')).href;
    const script = `
      const { serve } = await import(${JSON.stringify(pathToFileURL(realServePath(this.root)).href)});
      ${replay ? `const { openArchive } = await import(${JSON.stringify(archiveModule)});` : ''}
      const replays = ${replay ? `[{ region: ${JSON.stringify(replay.region)}, from: { archive: await openArchive(${JSON.stringify(replay.folder)}) }, speed: ${replay.speed} }]` : '[]'};
      const m = await serve({ dataDir: ${JSON.stringify(this.dataDir)}, port: ${this.port}, demo: ${this.setup.demo ?? true}, demoIntervalMs: ${this.demoIntervalMs}, workers: 1, replays });
      process.on('SIGTERM', () => { m.close().then(() => process.exit(0), () => process.exit(1)); });
    `;
    // A launcher file, not `node -e`: worker threads inherit execArgv, and --input-type breaks them.
    const launcher = join(mkdtempSync(join(tmpdir(), 'helicord-launch-')), 'launch.mjs');
    writeFileSync(launcher, script);
    const child = spawn(process.execPath, [launcher], { stdio: ['ignore', 'pipe', 'pipe'], env: { ...process.env, HELICORD_TOKEN: '' } });
    this.child = child;
    await new Promise<void>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`the monitor did not start in 20 s; log:\n${this.log}`)), 20_000);
      const onData = (chunk: Buffer): void => {
        this.log += chunk.toString();
        const m = /listening at (http:\/\/\S+)/.exec(this.log);
        if (m) {
          clearTimeout(timer);
          this.url = m[1];
          resolve();
        }
      };
      child.stdout!.on('data', onData);
      child.stderr!.on('data', (c: Buffer) => {
        this.log += c.toString();
      });
      child.once('exit', (code) => {
        clearTimeout(timer);
        reject(new Error(`the monitor exited with ${code}; log:\n${this.log}`));
      });
    });
  }

  /** Stops the monitor (SIGTERM, then SIGKILL after graceMs: a monitor with a compute backlog may take
   *  long to drain, and a hard stop must be survivable anyway) and waits for the process to end. */
  async stop(graceMs = 3000): Promise<void> {
    const child = this.child;
    this.child = undefined;
    if (!child || child.exitCode !== null) return;
    await new Promise<void>((resolve) => {
      const kill = setTimeout(() => child.kill("SIGKILL"), graceMs);
      child.once('exit', () => {
        clearTimeout(kill);
        resolve();
      });
      child.kill('SIGTERM');
    });
  }
}
