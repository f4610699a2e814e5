// The monitor in a child process of its own for the benchmarks (test/server/launch.mjs, the
// compiled code), so that its memory and CPU time are its own: resolves once it listens.
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';

export interface MonitorChild {
  readonly url: string;
  readonly pid: number;
  stop(): Promise<void>;
}

/** `options`: serve options added by the launcher (HELICORD_TEST_OPTIONS). */
export async function launchMonitorChild(dataDir: string, token: string, options?: Record<string, unknown>): Promise<MonitorChild> {
  const launcher = fileURLToPath(new URL('../../../test/server/launch.mjs', import.meta.url));
  const env = { ...process.env, HELICORD_TOKEN: token, ...(options && { HELICORD_TEST_OPTIONS: JSON.stringify(options) }) };
  const child = spawn(process.execPath, [launcher, dataDir], { env, stdio: ['ignore', 'pipe', 'inherit'] });
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    child.stdout!.on('data', (d) => { out += d; const m = /LISTENING (\S+)/.exec(out); if (m) resolve(m[1]); });
    child.once('exit', (code) => reject(new Error(`monitor exited (${code})`)));
  });
  return {
    url, pid: child.pid!,
    stop: () => new Promise((r) => { child.once('exit', () => r()); child.kill('SIGTERM'); setTimeout(() => child.kill('SIGKILL'), 5000).unref(); }),
  };
}
