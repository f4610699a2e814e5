// Helpers for the server tests: a monitor in a temporary data folder, frames as JSON, waiting
// until the pipeline has processed everything. The compute workers run the compiled dist/ code
// (`npm run build` first; `npm test` does it).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Frame } from '../../core/frame.js';
import { frameToJson } from '../../core/frameJson.js';
import type { RunningMonitor, ServeOptions } from '../../server/serve.js';
import { serve } from '../../server/serve.js';
import type WebSocket from 'ws';
import { spotFrame } from '../support/scenes.js';

export const TOKEN = 'test-token-0123456789';

export interface TestMonitor extends RunningMonitor {
  readonly dataDir: string;
  readonly lines: string[];
  stop(): Promise<void>;
}

export function tempDir(prefix = 'helicord-test-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}

export async function startMonitor(options: Partial<ServeOptions> = {}): Promise<TestMonitor> {
  process.env.HELICORD_TOKEN = TOKEN;
  const dataDir = options.dataDir ?? tempDir();
  const lines: string[] = [];
  const m = await serve({ dataDir, port: 0, workers: 1, log: (l) => lines.push(l), ...options });
  return {
    ...m, dataDir, lines,
    async stop() { await m.close(); rmSync(dataDir, { recursive: true, force: true }); },
  };
}

export function frameBody(frame: Frame): string {
  return JSON.stringify(frameToJson(frame));
}

/**
 * Posts a frame as a sender that honours back-pressure: a 503 (the region's queue is at its bound,
 * which depends on how fast this shared machine processes) is sent again until taken, within
 * `heldBackMs`; `{ heldBack: 'answer' }` returns the 503 itself, for tests of the bound.
 */
export async function postFrame(url: string, region: string, body: string | Buffer, opts: { token?: string | null; type?: string; heldBack?: 'resend' | 'answer'; heldBackMs?: number } = {}) {
  const headers: Record<string, string> = { 'content-type': opts.type ?? 'application/json' };
  const token = opts.token === undefined ? TOKEN : opts.token;
  if (token !== null) headers.authorization = `Bearer ${token}`;
  const end = Date.now() + (opts.heldBackMs ?? 120_000);
  for (;;) {
    const r = await fetch(`${url}/api/regions/${region}/frames`, { method: 'POST', headers, body });
    const answer = { status: r.status, body: (await r.json()) as Record<string, unknown> };
    if (r.status !== 503 || opts.heldBack === 'answer' || answer.body.field === '(server)') return answer;
    if (Date.now() > end) throw new Error(`${region}: the frame was held back (503) for more than ${opts.heldBackMs ?? 120_000} ms`);
    await new Promise((res) => setTimeout(res, 100));
  }
}

export async function getJson<T = Record<string, unknown>>(url: string, path: string, token?: string): Promise<T> {
  const r = await fetch(url + path, token ? { headers: { authorization: `Bearer ${token}` } } : {});
  if (!r.ok) throw new Error(`${path}: ${r.status} ${await r.text()}`);
  return (await r.json()) as T;
}

/** Polls health until the queue is empty (everything stored is processed). */
export async function waitIdle(url: string, timeoutMs = 30_000): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const h = await getJson<{ queue: number }>(url, '/api/health');
    if (h.queue === 0) return;
    if (Date.now() > until) throw new Error(`queue still ${h.queue} after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

/** Waits until `check` holds, asking every `stepMs`; fails naming `what` after `deadlineMs`. */
export async function until(what: string, deadlineMs: number, check: () => Promise<boolean> | boolean, stepMs = 25): Promise<void> {
  const end = Date.now() + deadlineMs;
  while (!(await check())) {
    if (Date.now() > end) throw new Error(`${what}: not within ${deadlineMs} ms`);
    await new Promise((r) => setTimeout(r, stepMs));
  }
}

/** A socket's JSON messages as they come, and a wait for a number of them. */
export interface SocketMessages<T> {
  /** Every message so far, in order. */
  readonly got: T[];
  /**
   * Resolves with the messages once `n` have come; fails naming `what` and the messages that did
   * come when `deadlineMs` passes or the socket closes first. Woken by each message, not polled.
   */
  atLeast(n: number, what: string, deadlineMs?: number): Promise<T[]>;
}

/** Starts collecting a socket's messages (call before sending anything that is answered). */
export function socketMessages<T = Record<string, unknown>>(ws: WebSocket): SocketMessages<T> {
  const got: T[] = [];
  const waiters = new Set<() => void>();
  let closed = false;
  const wake = () => { for (const w of [...waiters]) w(); };
  ws.on('message', (d) => { got.push(JSON.parse(d.toString()) as T); wake(); });
  ws.on('close', () => { closed = true; wake(); });
  const seen = () => JSON.stringify(got).slice(0, 600);
  return {
    got,
    atLeast(n, what, deadlineMs = 10_000) {
      return new Promise<T[]>((resolve, reject) => {
        const finish = (e?: Error) => { clearTimeout(timer); waiters.delete(check); if (e) reject(e); else resolve(got); };
        const check = () => {
          if (got.length >= n) finish();
          else if (closed) finish(new Error(`${what}: the socket closed after ${got.length} of ${n} messages: ${seen()}`));
        };
        const timer = setTimeout(() => finish(new Error(`${what}: ${got.length} of ${n} messages within ${deadlineMs} ms: ${seen()}`)), deadlineMs);
        waiters.add(check);
        check();
      });
    },
  };
}

/** Resolves when the socket is open; fails naming `what` on an error, a close or `deadlineMs`. */
export function opened(ws: WebSocket, what: string, deadlineMs = 10_000): Promise<void> {
  return new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`${what}: the socket did not open within ${deadlineMs} ms`)), deadlineMs);
    ws.once('open', () => { clearTimeout(timer); resolve(); });
    ws.once('error', (e) => { clearTimeout(timer); reject(new Error(`${what}: ${e.message}`)); });
    ws.once('close', (code) => { clearTimeout(timer); reject(new Error(`${what}: closed (${code}) before it opened`)); });
  });
}

/** A fixed shuffle (mulberry32), so a test is the same every run. */
export function shuffled<T>(items: readonly T[], seed: number): T[] {
  let a = seed >>> 0;
  const rand = () => { a = (a + 0x6d2b79f5) >>> 0; let t = a; t = Math.imul(t ^ (t >>> 15), t | 1); t ^= t + Math.imul(t ^ (t >>> 7), t | 61); return ((t ^ (t >>> 14)) >>> 0) / 4294967296; };
  const out = [...items];
  for (let i = out.length - 1; i > 0; i--) { const j = Math.floor(rand() * (i + 1)); [out[i], out[j]] = [out[j], out[i]]; }
  return out;
}

export const T0 = Date.UTC(2026, 2, 14, 6, 0, 0);
/** Orbital angular speed of the circling pair, rad/s (counter-clockwise). */
export const OMEGA = 3e-6;

/**
 * Two compact same-sign spots circling each other about the patch centre at OMEGA, each carrying
 * its orbital velocity (Berger & Field 1984: dH/dt = -(1/pi) Phi1 Phi2 Omega). 64x64 pixels of
 * 0.5 Mm, radius 6 Mm: the scene of the core's own check of that result (1% there).
 */
export function circlingFrame(time: number, extra: { noise?: () => number; noiseG?: number } = {}): Frame {
  const cx = 16, cy = 16, R = 6;
  const a = OMEGA * (time - T0) / 1000;
  const v = (x: number, y: number) => ({ vx: -OMEGA * 1000 * (y - cy), vy: OMEGA * 1000 * (x - cx) });
  const x1 = cx - R * Math.cos(a), y1 = cy - R * Math.sin(a);
  const x2 = cx + R * Math.cos(a), y2 = cy + R * Math.sin(a);
  const f = spotFrame(64, 64, 0.5, [
    { x: x1, y: y1, peak: 1000, sigma: 0.6, ...v(x1, y1) },
    { x: x2, y: y2, peak: 700, sigma: 0.5, ...v(x2, y2) },
  ], time);
  if (extra.noise && extra.noiseG) {
    const bn = Float64Array.from(f.bn, (b) => b + extra.noiseG! * extra.noise!());
    return { ...f, bn };
  }
  return f;
}

/** Irregular cadence: 60 to 100 s steps (fixed pattern). */
export function irregularTimes(n: number): number[] {
  const steps = [60, 85, 70, 100, 65, 90, 75, 80];
  const out = [T0];
  for (let i = 1; i < n; i++) out.push(out[i - 1] + steps[i % steps.length] * 1000);
  return out;
}

/** A monitor in its own process (test/server/launch.mjs, compiled dist/ code): it can be killed with SIGKILL and its memory is its own. */
export interface ChildMonitor {
  readonly child: import('node:child_process').ChildProcess;
  readonly url: string;
  /** Everything it logged (stderr) so far. */
  log(): string;
  /** True while the process runs. */
  alive(): boolean;
  /** Resident memory of the process, MiB (Linux /proc). */
  rssMiB(): number;
  kill9(): Promise<void>;
  stop(): Promise<void>;
}

export async function launchMonitor(dataDir: string, options: Record<string, unknown> = {}): Promise<ChildMonitor> {
  const { spawn } = await import('node:child_process');
  const { readFileSync } = await import('node:fs');
  const { fileURLToPath } = await import('node:url');
  const launcher = fileURLToPath(new URL('./launch.mjs', import.meta.url));
  const child = spawn(process.execPath, [launcher, dataDir], {
    env: { ...process.env, HELICORD_TOKEN: TOKEN, HELICORD_TEST_OPTIONS: JSON.stringify(options) },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let err = '';
  let exited = false;
  child.stderr!.on('data', (d) => (err += d));
  child.once('exit', () => { exited = true; });
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    // A monitor that does not come up is killed, not left running behind the failed test.
    const timer = setTimeout(() => { child.kill('SIGKILL'); reject(new Error(`monitor did not listen within 60 s: ${err}`)); }, 60_000);
    child.stdout!.on('data', (d) => {
      out += d;
      const m = /LISTENING (\S+)/.exec(out);
      if (m) { clearTimeout(timer); resolve(m[1]); }
    });
    child.once('exit', (code) => { clearTimeout(timer); reject(new Error(`monitor exited (${code}) before listening: ${err}`)); });
  });
  const exit = () => new Promise<void>((r) => { if (exited) r(); else child.once('exit', () => r()); });
  return {
    child, url,
    log: () => err,
    alive: () => !exited,
    rssMiB: () => {
      try {
        const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
        return m ? Number(m[1]) / 1024 : NaN;
      } catch { return NaN; }
    },
    kill9: async () => { const e = exit(); child.kill('SIGKILL'); await e; },
    stop: async () => {
      const e = exit();
      child.kill('SIGTERM');
      const t = setTimeout(() => child.kill('SIGKILL'), 20_000);
      await e;
      clearTimeout(t);
    },
  };
}
