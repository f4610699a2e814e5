// One region's frame latency in the monitor, with each frame's independent parts on a second
// thread (the default with two cores or more: server/frameAssistant.ts) and without
// (`--one-thread-per-frame`), in the same run: 512^2 demo frames posted one at a time into an idle
// monitor (the next after the previous sample reached the viewer), frames with their velocity and
// frames without (inferred between pairs), each sent as FITS (the frame file convention of
// docs/fits.md, as an observatory pipeline would send it: about 3 MB with velocities) and as JSON
// (about 11 MB, numbers as text). Prints POST-to-broadcast median and 95th percentile and
// the monitor's CPU per frame (user + system of its process, /proc), with the load average.
// Rounds alternate the two modes, each round in a fresh monitor process (test/server/launch.mjs).
// On a shared machine run it with a higher priority than the other jobs (e.g. `nice -n -15`, as
// root): the wall times are then this run's own.
// Parameters (environment): HELICORD_LATENCY_FRAMES (per round, default 8), HELICORD_LATENCY_ROUNDS
// (default 2), HELICORD_LATENCY_FORMATS (default "fits,json"), HELICORD_LATENCY_WARM_UP (frames
// posted before the timed ones, default 4; the first of a region without velocities only waits,
// the second is the region's first pair), HELICORD_LATENCY_COLD=1 (start the monitor cold).
// The monitor starts as the command line starts it: each compute thread first analyses a few small
// synthetic frames (server/analysisWarmUp.ts), and the bench waits for that (health's warming_up
// back to 0), as a campaign's first frame comes some time after the monitor started. Started cold
// (`--cold-start`), a compute thread runs its first frames before V8 has optimised the analysis:
// at 512^2 the 4th to 8th analysed frame then take 1.3-1.8x the steady time here.
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import WebSocket from 'ws';
import type { Frame } from '../../core/frame.js';
import { frameToFits } from '../../core/frameAssembly/frameToFits.js';
import { frameToJson } from '../../core/frameJson.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { launchMonitorChild } from './_monitorChild.js';

const TOKEN = 'bench-token';

function env(name: string, fallback: number): number {
  const v = Number(process.env[name]);
  return Number.isFinite(v) && v > 0 ? v : fallback;
}

const WARM_UP = env('HELICORD_LATENCY_WARM_UP', 4);
const COLD = process.env.HELICORD_LATENCY_COLD === '1';

function quantile(values: number[], q: number): number {
  const a = [...values].sort((x, y) => x - y);
  return a.length === 0 ? NaN : a[Math.min(a.length - 1, Math.floor(q * (a.length - 1) + 0.5))];
}

/** CPU seconds (user + system) of a process so far, from /proc/PID/stat. */
function cpuSecondsOf(pid: number): number {
  const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
  return (Number(fields[11]) + Number(fields[12])) / 100; // utime, stime in clock ticks (100/s)
}

/** Polls the monitor's health until `done` says so (at most 120 s). */
async function healthUntil(url: string, done: (h: { queue: number; warming_up?: number }) => boolean, what: string): Promise<void> {
  const deadline = performance.now() + 120_000;
  while (!done((await (await fetch(`${url}/api/health`)).json()) as { queue: number; warming_up?: number })) {
    if (performance.now() > deadline) throw new Error(`${what}: the monitor was not done after 120 s`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

interface Round { latencies: number[]; cpuPerFrame: number; warmUpS: number }

/** One frame as sent: its bytes and content type. */
interface Body { readonly bytes: string | Uint8Array; readonly type: string }

async function round(frames: readonly Body[], assist: boolean): Promise<Round> {
  const dataDir = mkdtempSync(join(tmpdir(), 'helicord-latency-'));
  const mon = await launchMonitorChild(dataDir, TOKEN, { assistFrames: assist, warmUp: !COLD });
  try {
    const started = performance.now();
    await healthUntil(mon.url, (h) => !h.warming_up, 'warm-up');
    const warmUpS = (performance.now() - started) / 1000;
    const region = 'latency';
    const put = await fetch(`${mon.url}/api/regions/${region}/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"watchFolder": false}' });
    if (put.status !== 200) throw new Error(`creating the region: ${put.status}`);
    const ws = new WebSocket(`${mon.url.replace('http', 'ws')}/ws/view?region=${region}`);
    const arrived = new Map<number, number>();
    const waiters = new Map<number, () => void>();
    ws.on('message', (d) => {
      const msg = JSON.parse(d.toString()) as { type: string; sample?: { frame_id: number } };
      if (msg.type !== 'sample' || !msg.sample) return;
      arrived.set(msg.sample.frame_id, performance.now());
      waiters.get(msg.sample.frame_id)?.();
    });
    await new Promise((r) => ws.once('open', r));
    const send = async (body: Body) => {
      const t = performance.now();
      const r = await fetch(`${mon.url}/api/regions/${region}/frames`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': body.type }, body: body.bytes });
      const answer = (await r.json()) as { frame_id?: number };
      if (r.status !== 201 || answer.frame_id === undefined) throw new Error(`ingest answered ${r.status}`);
      return { id: answer.frame_id, t };
    };
    const settle = () => healthUntil(mon.url, (h) => h.queue === 0, 'queue');
    // Warm-up: the first WARM_UP frames (kernel spectra and JIT in both threads; without velocities
    // the first only waits).
    for (const body of frames.slice(0, WARM_UP)) { await send(body); await settle(); }
    const latencies: number[] = [];
    const cpu0 = cpuSecondsOf(mon.pid);
    for (const body of frames.slice(WARM_UP)) {
      const { id, t } = await send(body);
      if (!arrived.has(id)) await new Promise<void>((r) => waiters.set(id, r));
      latencies.push(arrived.get(id)! - t);
      await settle();
    }
    const cpuPerFrame = (cpuSecondsOf(mon.pid) - cpu0) / (frames.length - WARM_UP);
    ws.close();
    return { latencies, cpuPerFrame, warmUpS };
  } finally {
    await mon.stop();
    rmSync(dataDir, { recursive: true, force: true });
  }
}

export async function bench(): Promise<void> {
  const count = env('HELICORD_LATENCY_FRAMES', 8) + WARM_UP;
  const rounds = env('HELICORD_LATENCY_ROUNDS', 2);
  const load = () => loadavg().map((v) => v.toFixed(2)).join(' ');
  console.log(`frame latency, one region, 512^2 demo frames at 720 s, monitor ${COLD ? 'started cold' : 'warmed up first'}, ${WARM_UP} frames before ${count - WARM_UP} timed per round, ${rounds} rounds per mode; load average ${load()}`);
  const formats = (process.env.HELICORD_LATENCY_FORMATS ?? 'fits,json').split(',').map((f) => f.trim());
  for (const withVelocity of [true, false]) for (const format of formats) {
    if (format !== 'fits' && format !== 'json') throw new Error(`HELICORD_LATENCY_FORMATS: "${format}" is not fits or json`);
    const region = demoRegion({ frames: count, size: 512, withVelocity, cadenceS: 720, storyH: 72, storyStartH: 16 });
    const bodies = Array.from({ length: count }, (_, i): Body => {
      const f: Frame = region.frameAt(i);
      const sent = withVelocity ? f : { ...f, labels: undefined };
      return format === 'fits'
        ? { bytes: frameToFits(sent, { creator: 'helicord bench' }), type: 'application/fits' }
        : { bytes: JSON.stringify(frameToJson(sent)), type: 'application/json' };
    });
    const size = (bodies[0].bytes.length / 1e6).toFixed(1);
    const results: Record<string, Round[]> = { 'one thread': [], 'two threads': [] };
    for (let r = 0; r < rounds; r++) {
      for (const assist of r % 2 ? [true, false] : [false, true]) results[assist ? 'two threads' : 'one thread'].push(await round(bodies, assist));
    }
    for (const [mode, rs] of Object.entries(results)) {
      const all = rs.flatMap((x) => x.latencies);
      console.log(`${withVelocity ? 'velocity given   ' : 'velocity inferred'} ${format.padEnd(4)} (${size} MB) ${mode.padEnd(11)}: POST to broadcast median ${quantile(all, 0.5).toFixed(0)} ms, p95 ${quantile(all, 0.95).toFixed(0)} ms; `
        + `monitor CPU per frame ${rs.map((x) => x.cpuPerFrame.toFixed(2)).join(' / ')} s (${all.length} frames)`
        + `${COLD ? '' : `; warm-up ${rs.map((x) => x.warmUpS.toFixed(1)).join(' / ')} s`} | load average ${load()}`);
    }
  }
}
