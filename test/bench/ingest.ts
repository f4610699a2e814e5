// Load script for the monitor (loopback only, bounded in count and time). The monitor runs in a
// child process (test/server/launch.mjs, the compiled code) so that its memory is its own.
//   - sustained ingest of 512^2 frames (bn, vx, vy, labels as JSON) with 20 viewer sockets open,
//     posting the next frame as soon as fewer than 2 are waiting: frames/s, latency from POST to
//     the sample's broadcast at the viewers (median, 95th percentile), queue;
//   - a soak at that pace for HELICORD_SOAK_S seconds (default 30): the monitor's RSS sampled
//     every 2 s (first, peak, last) to show it stays bounded;
//   - health answers while a 1024^2 frame is parsed and computed (max and median latency);
//   - overload: frames posted at twice the rate the monitor computed them, without waiting for
//     the queue, for HELICORD_OVERLOAD_S seconds (default 30): how many were stored and how many
//     held back (503 with Retry-After), the region's queue peak against its bound, and the
//     POST-to-broadcast delay of the stored ones (bounded by the queue bound).
// Parameters (environment): HELICORD_BENCH_FRAMES (default 12), HELICORD_SOAK_S (default 30),
// HELICORD_OVERLOAD_S (default 30), HELICORD_BENCH_LIMIT_S (hard stop, default 300).
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import WebSocket from 'ws';
import { frameToJson } from '../../core/frameJson.js';
import { spotFrame } from '../support/scenes.js';
import { launchMonitorChild } from './_monitorChild.js';

const TOKEN = 'bench-token';
const T0 = Date.UTC(2026, 2, 14, 0, 0, 0);

function env(name: string, fallback: number): number {
  const v = Number(process.env[name]);
  return Number.isFinite(v) && v > 0 ? v : fallback;
}

function quantile(values: number[], q: number): number {
  const a = [...values].sort((x, y) => x - y);
  if (a.length === 0) return NaN;
  return a[Math.min(a.length - 1, Math.floor(q * (a.length - 1) + 0.5))];
}

function rssMiBOf(pid: number): number {
  try {
    const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) / 1024 : NaN;
  } catch { return NaN; }
}

/** A frame's JSON with a placeholder time, so each frame is the text with its own time put in. */
function frameTemplate(n: number): { head: string; tail: string } {
  const d = 92 / n;
  const c = (n * d) / 2;
  const f = spotFrame(n, n, d, [
    { x: c - 8, y: c, peak: 1500, sigma: 2.5, omega: 2e-5, vx: 0, vy: -0.3 },
    { x: c + 8, y: c, peak: -1200, sigma: 2.2, vx: 0, vy: 0.3 },
    { x: c, y: c + 12, peak: 600, sigma: 1.5, vx: 0.2, vy: 0 },
  ]);
  const text = JSON.stringify({ ...frameToJson(f), time: '@TIME@' });
  const [head, tail] = text.split('"@TIME@"');
  return { head, tail };
}

const withTime = (t: { head: string; tail: string }, ms: number) => `${t.head}"${new Date(ms).toISOString()}"${t.tail}`;

async function post(url: string, region: string, body: string): Promise<{ status: number; frame_id?: number }> {
  const r = await fetch(`${url}/api/regions/${region}/frames`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body });
  const answer = (await r.json()) as { frame_id?: number };
  return { status: r.status, ...(answer.frame_id !== undefined && { frame_id: answer.frame_id }) };
}

async function health(url: string): Promise<{ ms: number; queue: number; loopMax: number; queuePeak: number; queueLimit: number }> {
  const t = performance.now();
  const h = (await (await fetch(`${url}/api/health`)).json()) as { queue: number; loop_delay_ms?: { max: number }; queue_peak?: number; queue_limit?: number };
  return { ms: performance.now() - t, queue: h.queue, loopMax: h.loop_delay_ms?.max ?? NaN, queuePeak: h.queue_peak ?? NaN, queueLimit: h.queue_limit ?? NaN };
}

/** Creates a region (viewer sockets are only opened to regions that exist). */
async function createRegion(url: string, region: string): Promise<void> {
  const r = await fetch(`${url}/api/regions/${region}/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"watchFolder": false}' });
  if (r.status !== 200) throw new Error(`creating region ${region}: ${r.status}`);
}

export async function bench(): Promise<void> {
  const frames = env('HELICORD_BENCH_FRAMES', 12);
  const soakS = env('HELICORD_SOAK_S', 30);
  const limitS = env('HELICORD_BENCH_LIMIT_S', 300);
  const deadline = Date.now() + limitS * 1000;
  const dataDir = mkdtempSync(join(tmpdir(), 'helicord-bench-'));
  const mon = await launchMonitorChild(dataDir, TOKEN);
  try {
    const region = 'load';
    const template = frameTemplate(512);
    console.log(`512^2 frame JSON: ${(withTime(template, T0).length / 1e6).toFixed(1)} MB; ${frames} frames, soak ${soakS} s, hard limit ${limitS} s`);
    // 20 viewers; the broadcast time of each frame's sample is when every viewer has it.
    const seen = new Map<number, number[]>();
    const viewers: WebSocket[] = [];
    // The region must exist before viewers subscribe to it.
    await createRegion(mon.url, region);
    await createRegion(mon.url, 'big');
    for (let i = 0; i < 20; i++) {
      const ws = new WebSocket(`${mon.url.replace('http', 'ws')}/ws/view?region=${region}`);
      ws.on('message', (d) => {
        const msg = JSON.parse(d.toString()) as { type: string; sample?: { frame_id: number } };
        if (msg.type === 'sample' && msg.sample) {
          const list = seen.get(msg.sample.frame_id) ?? [];
          list.push(performance.now());
          seen.set(msg.sample.frame_id, list);
        }
      });
      await new Promise((r) => ws.once('open', r));
      viewers.push(ws);
    }
    const postedAt = new Map<number, number>();
    let time = T0;
    let sent = 0;
    const sendOne = async () => {
      time += 720_000;
      const body = withTime(template, time);
      const t = performance.now();
      const r = await post(mon.url, region, body);
      if (r.status !== 201 || r.frame_id === undefined) throw new Error(`ingest answered ${r.status}`);
      postedAt.set(r.frame_id, t);
      sent++;
    };
    // Warm up (kernel spectra, JIT): 2 frames, not counted.
    await sendOne(); await sendOne();
    while ((await health(mon.url)).queue > 0) await new Promise((r) => setTimeout(r, 20));
    postedAt.clear(); seen.clear();
    const start = performance.now();
    const phase = async (until: (i: number) => boolean, sampleRss?: number[]) => {
      let i = 0;
      let lastRss = 0;
      while (until(i) && Date.now() < deadline) {
        const h = await health(mon.url);
        if (sampleRss && performance.now() - lastRss > 2000) { sampleRss.push(rssMiBOf(mon.pid)); lastRss = performance.now(); }
        if (h.queue >= 2) { await new Promise((r) => setTimeout(r, 10)); continue; }
        await sendOne();
        i++;
      }
      while ((await health(mon.url)).queue > 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
    };
    await phase((i) => i < frames);
    const elapsed = (performance.now() - start) / 1000;
    // The rate the monitor computed at, from this phase alone (later phases add frames to postedAt).
    const computedRate = postedAt.size / elapsed;
    const latencies: number[] = [];
    for (const [id, t] of postedAt) {
      const arrivals = seen.get(id);
      if (arrivals && arrivals.length === viewers.length) latencies.push(Math.max(...arrivals) - t);
    }
    console.log(`sustained ingest: ${postedAt.size} frames in ${elapsed.toFixed(1)} s = ${(postedAt.size / elapsed).toFixed(2)} frames/s with ${viewers.length} viewers`);
    console.log(`POST to broadcast at all ${viewers.length} viewers: median ${quantile(latencies, 0.5).toFixed(0)} ms, p95 ${quantile(latencies, 0.95).toFixed(0)} ms (${latencies.length} frames)`);

    // Latency of a single frame into an idle monitor (no queue ahead of it).
    const single: number[] = [];
    for (let k = 0; k < 3 && Date.now() < deadline; k++) {
      const n = postedAt.size;
      await sendOne();
      const id = [...postedAt.keys()][n];
      while ((seen.get(id)?.length ?? 0) < viewers.length && Date.now() < deadline) await new Promise((r) => setTimeout(r, 5));
      single.push(Math.max(...seen.get(id)!) - postedAt.get(id)!);
    }
    console.log(`one frame into an idle monitor, POST to broadcast at all viewers: median ${quantile(single, 0.5).toFixed(0)} ms (${single.length} frames)`);

    // Soak.
    const rss: number[] = [rssMiBOf(mon.pid)];
    const soakStart = Date.now();
    const before = sent;
    await phase(() => Date.now() - soakStart < soakS * 1000, rss);
    rss.push(rssMiBOf(mon.pid));
    console.log(`soak ${((Date.now() - soakStart) / 1000).toFixed(0)} s, ${sent - before} frames: monitor RSS first ${rss[0].toFixed(0)} MiB, peak ${Math.max(...rss).toFixed(0)} MiB, last ${rss.at(-1)!.toFixed(0)} MiB (${rss.length} samples)`);

    // Health while a 1024^2 frame is parsed and computed (a region of its own).
    const big = frameTemplate(1024);
    const bigBody = withTime(big, T0);
    const lat: number[] = [];
    let done = false;
    const poller = (async () => { while (!done) { lat.push((await health(mon.url)).ms); await new Promise((r) => setTimeout(r, 20)); } })();
    const tPost = performance.now();
    const r = await post(mon.url, 'big', bigBody);
    const tStored = performance.now();
    const during: number[] = [];
    const loopMax: number[] = [];
    for (;;) {
      const h = await health(mon.url);
      if (h.queue === 0 || Date.now() > deadline) break;
      during.push(h.ms);
      loopMax.push(h.loopMax);
      await new Promise((res) => setTimeout(res, 20));
    }
    done = true;
    await poller;
    console.log(`1024^2 frame (${(bigBody.length / 1e6).toFixed(0)} MB JSON, answer ${r.status}): stored after ${(tStored - tPost).toFixed(0)} ms, computed ${(performance.now() - tStored).toFixed(0)} ms later`);
    console.log(`health round trip while it computes: median ${quantile(during, 0.5).toFixed(1)} ms, max ${Math.max(...during).toFixed(1)} ms (${during.length} calls); over the whole ingest incl. upload and parsing: max ${Math.max(...lat).toFixed(1)} ms`);
    console.log(`monitor's own event-loop delay (perf_hooks, 5-10 s windows, so the upload and intake are included): max ${loopMax.length ? Math.max(...loopMax).toFixed(1) : 'n/a'} ms`);

    // Overload: twice the measured compute rate, each POST sent on schedule without waiting.
    const overloadS = env('HELICORD_OVERLOAD_S', 30);
    const rate = computedRate;
    const intervalMs = 1000 / (2 * rate);
    const beforeIds = new Set(postedAt.keys());
    let stored = 0, held = 0, other = 0;
    const retryAfter: number[] = [];
    const inflight: Promise<void>[] = [];
    const queueSeen: number[] = [];
    const overloadStart = Date.now();
    while (Date.now() - overloadStart < overloadS * 1000 && Date.now() < deadline) {
      time += 720_000;
      const body = withTime(template, time);
      const t = performance.now();
      inflight.push(fetch(`${mon.url}/api/regions/${region}/frames`, { method: 'POST', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body })
        .then(async (res) => {
          const answer = (await res.json()) as { frame_id?: number };
          if (res.status === 201 && answer.frame_id !== undefined) { stored++; postedAt.set(answer.frame_id, t); }
          else if (res.status === 503) { held++; retryAfter.push(Number(res.headers.get('retry-after'))); }
          else other++;
        }));
      queueSeen.push((await health(mon.url)).queue);
      await new Promise((res) => setTimeout(res, intervalMs));
    }
    // What was offered: the POSTs sent in the window (the health call of each step slows the schedule).
    const windowS = (Date.now() - overloadStart) / 1000;
    const offered = inflight.length / windowS;
    await Promise.all(inflight);
    while ((await health(mon.url)).queue > 0 && Date.now() < deadline) await new Promise((res) => setTimeout(res, 20));
    const hEnd = await health(mon.url);
    const overloadLatency: number[] = [];
    for (const [id, t] of postedAt) {
      if (beforeIds.has(id)) continue;
      const arrivals = seen.get(id);
      if (arrivals && arrivals.length === viewers.length) overloadLatency.push(Math.max(...arrivals) - t);
    }
    console.log(`overload scheduled at ${(2 * rate).toFixed(2)} frames/s (twice the ${rate.toFixed(2)} computed): ${inflight.length} POSTs in ${windowS.toFixed(0)} s = ${offered.toFixed(2)} frames/s offered (${(offered / rate).toFixed(1)} times the computed rate), all answered after ${((Date.now() - overloadStart) / 1000).toFixed(0)} s: ${stored} stored, ${held} held back with 503 (Retry-After median ${quantile(retryAfter, 0.5)} s), ${other} other answers`);
    console.log(`queue bound ${hEnd.queueLimit}: peak ${hEnd.queuePeak} (${hEnd.queuePeak <= hEnd.queueLimit ? 'held' : 'PASSED'}); queue seen by health: max ${Math.max(...queueSeen)}; POST to broadcast of the stored ones: median ${quantile(overloadLatency, 0.5).toFixed(0)} ms, max ${overloadLatency.length ? Math.max(...overloadLatency).toFixed(0) : 'n/a'} ms`);
    for (const ws of viewers) ws.close();
  } finally {
    await mon.stop();
    rmSync(dataDir, { recursive: true, force: true });
  }
}
