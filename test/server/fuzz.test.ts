// A bounded fuzz run against the monitor in its own process (loopback only, a fixed seed, a few
// hundred inputs): FITS and JSON mutants over HTTP, junk over both WebSockets (messages and
// broken frames of the protocol itself), and junk dropped into the watched folder. The
// monitor must never crash or hang, never answer 500 to bad input, refuse what it refuses with
// a documented status, and leave the stored series as it was (a mutant that is a valid later
// frame may be added; nothing before it changes).
import { execFileSync } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdirSync, readdirSync, rmSync, symlinkSync, truncateSync, writeFileSync } from 'node:fs';
import { connect } from 'node:net';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import type { Frame } from '../../core/frame.js';
import { frameToFits } from '../../core/frameAssembly/frameToFits.js';
import { frameToJson } from '../../core/frameJson.js';
import type { SeriesRow } from '../../core/seriesColumns.js';
import { spotFrame } from '../support/scenes.js';
import type { ChildMonitor } from './support.js';
import { TOKEN, getJson, launchMonitor, tempDir, until, waitIdle } from './support.js';

const SEED = 20261202;
const T0 = Date.UTC(2026, 2, 14, 6);
/** Answers a bad input may get (docs/api.md); 500 is never one of them. */
const REFUSALS = new Set([400, 401, 409, 413, 415, 422, 503]);

/** mulberry32: a small seeded generator, so that every run tries the same inputs. */
function rng(seed: number) {
  let a = seed >>> 0;
  const next = () => { a = (a + 0x6d2b79f5) >>> 0; let t = a; t = Math.imul(t ^ (t >>> 15), t | 1); t ^= t + Math.imul(t ^ (t >>> 7), t | 61); return ((t ^ (t >>> 14)) >>> 0) / 4294967296; };
  return {
    next,
    int: (n: number) => Math.floor(next() * n),
    pick: <T>(xs: readonly T[]): T => xs[Math.floor(next() * xs.length)],
  };
}
type Rng = ReturnType<typeof rng>;

function frameAt(i: number): Frame {
  return spotFrame(24, 24, 0.5, [
    { x: 4 + 0.1 * i, y: 6, peak: 900, sigma: 0.8, vx: 0.1, vy: 0.05 },
    { x: 8, y: 5 - 0.05 * i, peak: -700, sigma: 0.7, vx: -0.1, vy: 0 },
  ], T0 + i * 60_000);
}

const jsonOf = (f: Frame) => JSON.stringify(frameToJson(f));

// --- mutators ------------------------------------------------------------------------------

function mutateBytes(r: Rng, src: Uint8Array): Uint8Array {
  let b: Uint8Array = Uint8Array.from(src);
  const kind = r.int(6);
  if (kind === 0) for (let k = 1 + r.int(8); k > 0; k--) { const i = r.int(b.length); b[i] ^= 1 << r.int(8); }
  else if (kind === 1) for (let k = 1 + r.int(16); k > 0; k--) b[r.int(b.length)] = r.int(256);
  else if (kind === 2) b = b.subarray(0, r.int(b.length));
  else if (kind === 3) { const at = r.int(b.length); const ins = randomBytesFrom(r, 1 + r.int(3000)); b = concat(b.subarray(0, at), ins, b.subarray(at)); }
  else if (kind === 4) { const at = r.int(b.length); b = concat(b.subarray(0, at), b.subarray(Math.min(b.length, at + 1 + r.int(4000)))); }
  else { const n = Math.floor(b.length / 2880); if (n >= 2) { const i = r.int(n), j = r.int(n); const bi = b.slice(i * 2880, i * 2880 + 2880); b.set(b.subarray(j * 2880, j * 2880 + 2880), i * 2880); b.set(bi, j * 2880); } }
  return b;
}

function randomBytesFrom(r: Rng, n: number): Uint8Array {
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) out[i] = r.int(256);
  return out;
}

function concat(...parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) { out.set(p, o); o += p.length; }
  return out;
}

const CARD_KEYS = ['NAXIS', 'NAXIS1', 'NAXIS2', 'BITPIX', 'PCOUNT', 'GCOUNT', 'BSCALE', 'BZERO', 'BLANK', 'ZNAXIS1', 'ZNAXIS2', 'ZTILE1', 'ZTILE2', 'ZBITPIX', 'ZCMPTYPE', 'TFORM1', 'TFIELDS', 'CDELT1', 'CDELT2', 'CUNIT1', 'DATE-OBS', 'TIMESYS', 'BUNIT', 'EXTNAME', 'ZQUANTIZ', 'ZVAL1'];
const CARD_VALUES = ['-1', '0', '1', '3', '999999999', '4096', '65536', '1E308', '-1E308', 'NAN', "'x'", "''", 'T', 'F', '', "'9999-12-31T00:00:00'", "'G'", "'T'", "'RICE_1'", "'GZIP_2'", "'1PB(999999999)'", "'1QB'", '2147483647', '-2147483648', '1.5', "'&'"];

/** Replaces the value of a structural card of a FITS file. */
function mutateCard(r: Rng, src: Uint8Array): Uint8Array {
  const b = Uint8Array.from(src);
  const text = new TextDecoder('latin1').decode(b);
  const key = r.pick(CARD_KEYS);
  const positions: number[] = [];
  for (let at = 0; at + 80 <= b.length; at += 80) if (text.slice(at, at + 8).trimEnd() === key && text.slice(at + 8, at + 10) === '= ') positions.push(at);
  if (positions.length === 0) return mutateBytes(r, src);
  const at = r.pick(positions);
  const card = `${key.padEnd(8)}= ${r.pick(CARD_VALUES).padStart(20)}`.padEnd(80).slice(0, 80);
  for (let i = 0; i < 80; i++) b[at + i] = card.charCodeAt(i);
  return b;
}

const WEIRD: unknown[] = [null, -1, 0, 1e308, -1e308, 1e38, '', 'x', [], {}, true, [[1]], 'NaN', 2 ** 53 + 1, -0.5, 1e-320, '2026-03-14T06:00:00Z'];

function mutateJson(r: Rng, base: Frame): string {
  const o = frameToJson(base) as Record<string, unknown>;
  const kind = r.int(9);
  const keys = ['time', 'nx', 'ny', 'dx', 'dy', 'bn', 'vx', 'vy', 'bx', 'by', 'vz', 'labels'];
  if (kind === 0) delete o[r.pick(keys)];
  else if (kind === 1) o[r.pick(keys)] = r.pick(WEIRD);
  else if (kind === 2) { const m = r.pick(['bn', 'vx', 'vy', 'labels']); const a = o[m] as unknown[]; if (a) a[r.int(a.length)] = r.pick(WEIRD); }
  else if (kind === 3) { const m = r.pick(['bn', 'vx', 'vy', 'labels']); const a = o[m] as unknown[]; if (a) o[m] = r.next() < 0.5 ? a.slice(0, r.int(a.length)) : [...a, ...a]; }
  else if (kind === 4) o.time = r.pick(['9999-12-31T00:00:00Z', '2026-13-45T99:99:99Z', '', 'yesterday', '2026-03-14T06:00:00', '1970-01-01T00:00:00Z', '2026-03-14T06:10:00+01:00', 'x'.repeat(5000)]);
  else if (kind === 5) { o.nx = r.pick([0, -24, 25, 2 ** 31, 1e6, 24.5]); }
  else if (kind === 6) return r.pick(['', 'null', '[]', '1', '"frame"', '\uFEFF' + jsonOf(base), '{'.repeat(5000), '['.repeat(100_000) + ']'.repeat(100_000), '{"__proto__": {"nx": 5}, "time": 1}', JSON.stringify({ constructor: { prototype: { x: 1 } } })]);
  else if (kind === 7) o.extra = 'y'.repeat(r.int(200_000));
  else return new TextDecoder('latin1').decode(mutateBytes(r, new TextEncoder().encode(jsonOf(base))));
  return JSON.stringify(o);
}

// --- helpers -------------------------------------------------------------------------------

async function post(url: string, body: Uint8Array | string, type: string, token: string | null = TOKEN): Promise<number> {
  const headers: Record<string, string> = { 'content-type': type };
  if (token) headers.authorization = `Bearer ${token}`;
  const r = await fetch(`${url}/api/regions/fz/frames`, { method: 'POST', headers, body, signal: AbortSignal.timeout(20_000) });
  await r.arrayBuffer();
  return r.status;
}

interface Tally { tried: number; answers: Record<number, number>; accepted: number; fivehundreds: string[] }

describe('fuzz (seed 20261202): the monitor under a few hundred hostile inputs', () => {
  it('never crashes, never hangs, never answers 500 to bad input, and leaves the stored series as it was', async () => {
    const r = rng(SEED);
    const dir = tempDir('helicord-fuzz-');
    let m: ChildMonitor | undefined;
    let sampler: ReturnType<typeof setInterval> | undefined;
    let peakRss = 0;
    const tally: Tally = { tried: 0, answers: {}, accepted: 0, fivehundreds: [] };
    const note = (what: string, status: number) => {
      tally.tried++;
      tally.answers[status] = (tally.answers[status] ?? 0) + 1;
      if (status === 201) tally.accepted++;
      if (status >= 500 && status !== 503) tally.fivehundreds.push(`${what}: ${status}`);
    };
    try {
      m = await launchMonitor(join(dir, 'data'), { bodyLimit: 4_000_000, maxFramePixels: 256 * 256 });
      const url = m.url;
      const child = m;
      sampler = setInterval(() => { peakRss = Math.max(peakRss, child.rssMiB() || 0); }, 100);
      const put = await fetch(`${url}/api/regions/fz/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: JSON.stringify({ latenessS: 0 }) });
      expect(put.status).toBe(200);
      // The stored series the fuzzing must not change.
      for (let i = 0; i < 5; i++) expect(await post(url, jsonOf(frameAt(i)), 'application/json')).toBe(201);
      await waitIdle(url);
      const base = (await getJson<{ samples: SeriesRow[] }>(url, '/api/regions/fz/series')).samples;
      expect(base.length).toBeGreaterThan(0);
      const lastBase = frameAt(4).time;

      // 1. FITS mutants over HTTP (plain and tile-compressed sources).
      const fitsSources = [frameToFits(frameAt(3)), frameToFits(frameAt(3), { compression: { type: 'RICE_1' } }), frameToFits(frameAt(3), { compression: { type: 'GZIP_1' } })];
      for (let k = 0; k < 150; k++) {
        const src = r.pick(fitsSources);
        const body = r.next() < 0.5 ? mutateCard(r, src) : mutateBytes(r, src);
        const status = await post(url, body, r.next() < 0.95 ? 'application/fits' : r.pick(['text/plain', 'application/octet-stream']));
        note('fits', status);
        expect(m.alive()).toBe(true);
      }
      // 2. JSON mutants over HTTP (some without the token, some of another type).
      for (let k = 0; k < 150; k++) {
        const body = mutateJson(r, frameAt(2 + r.int(3)));
        const token = r.next() < 0.05 ? r.pick([null, 'wrong']) : TOKEN;
        note('json', await post(url, body, 'application/json', token));
        expect(m.alive()).toBe(true);
      }

      // 3. Junk over the ingest socket: each message answered (ack or refusal), never 500.
      const ws = new WebSocket(`${url.replace('http', 'ws')}/ws/ingest?region=fz&token=${TOKEN}`);
      await new Promise((ok, fail) => { ws.once('open', ok); ws.once('error', fail); });
      const replies: { type: string; code?: number; status?: string }[] = [];
      ws.on('message', (d) => replies.push(JSON.parse(d.toString())));
      const wsSent = 60;
      for (let k = 0; k < wsSent; k++) {
        const c = r.int(4);
        if (c === 0) ws.send(randomBytesFrom(r, 1 + r.int(5000)), { binary: true });
        else if (c === 1) ws.send(mutateJson(r, frameAt(3)));
        else if (c === 2) ws.send(mutateBytes(r, r.pick(fitsSources)), { binary: true });
        else ws.send(r.pick(['', '{}', 'null', '\u0000\u0001', '{"time"']));
      }
      await until('every ingest message is answered', 60_000, () => replies.length === wsSent);
      ws.close();
      for (const x of replies) {
        note('ws', x.type === 'ack' ? (x.status === 'stored' ? 201 : 200) : x.code ?? 0);
        expect(x.type === 'ack' || (x.type === 'refused' && REFUSALS.has(x.code ?? 0))).toBe(true);
      }
      // Junk on the viewer socket: each message answered with an error, the viewer kept.
      const view = new WebSocket(`${url.replace('http', 'ws')}/ws/view?region=fz`);
      const viewMsgs: { type: string }[] = [];
      view.on('message', (d) => viewMsgs.push(JSON.parse(d.toString())));
      await new Promise((ok, fail) => { view.once('open', ok); view.once('error', fail); });
      for (let k = 0; k < 40; k++) view.send(r.pick(['x', '[]', 'null', '{"type":"backfill"}', '{"type":"backfill","since":"nope"}', '{"type":"backfill","since":"2026-03-14T06:00:00Z"}', '{"type":"subscribe"}', JSON.stringify({ type: 'backfill', since: 'x'.repeat(1000) })]));
      await until('every viewer message is answered', 30_000, () => viewMsgs.length >= 41);
      expect(viewMsgs[0].type).toBe('snapshot');
      expect(viewMsgs.slice(1).every((x) => x.type === 'error' || x.type === 'backfill')).toBe(true);
      view.close();
      tally.tried += 40;
      // Broken protocol: raw bytes after an upgrade, and upgrades that are not.
      const port = Number(new URL(url).port);
      const raw = [
        'GET /ws/ingest?region=fz HTTP/1.1\r\nHost: 127.0.0.1\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n\r\n',
        `GET /ws/view?region=../../etc HTTP/1.1\r\nHost: 127.0.0.1\r\nUpgrade: websocket\r\nConnection: Upgrade\r\nSec-WebSocket-Key: ${randomBytes(16).toString('base64')}\r\nSec-WebSocket-Version: 13\r\n\r\n`,
        `GET /ws/view?region=fz HTTP/1.1\r\nHost: 127.0.0.1\r\nUpgrade: websocket\r\nConnection: Upgrade\r\nSec-WebSocket-Key: ${randomBytes(16).toString('base64')}\r\nSec-WebSocket-Version: 13\r\n\r\n\u0082\u0005hello\u00ff\u00ff\u00ff\u00ff\u00ff`,
        `GET /ws/ingest?region=fz&token=${TOKEN} HTTP/1.1\r\nHost: 127.0.0.1\r\nUpgrade: websocket\r\nConnection: Upgrade\r\nSec-WebSocket-Key: ${randomBytes(16).toString('base64')}\r\nSec-WebSocket-Version: 13\r\n\r\n\u0081\u00ff\u0000\u0000\u0000\u0000\u00ff\u00ff\u00ff\u00ff`,
        'GARBAGE\r\n\r\n',
        `POST /api/regions/fz/frames HTTP/1.1\r\nHost: 127.0.0.1\r\nAuthorization: Bearer ${TOKEN}\r\nContent-Type: application/json\r\nContent-Length: 100000\r\n\r\n{"time":`,
      ];
      for (const text of raw) {
        await new Promise<void>((done) => {
          const s = connect(port, '127.0.0.1');
          s.on('error', () => done());
          s.on('close', () => done());
          s.on('data', () => undefined);
          s.write(Buffer.from(text, 'latin1'));
          setTimeout(() => s.destroy(), 500);
        });
        tally.tried++;
        expect(m.alive()).toBe(true);
      }

      // 4. Junk in the watched folder: each refused (moved to refused/) or left alone.
      const inbox = join(dir, 'data', 'inbox', 'fz');
      await until('the inbox exists', 10_000, () => { try { readdirSync(inbox); return true; } catch { return false; } });
      const secret = join(dir, 'secret.txt');
      writeFileSync(secret, 'sEcReT-do-not-show');
      const refusedBefore = (await getJson<{ refusals: unknown[] }>(url, '/api/regions/fz/refusals')).refusals.length;
      const junk: { name: string; make: () => void; refused: boolean }[] = [
        { name: 'empty.json', make: () => writeFileSync(join(inbox, 'empty.json'), ''), refused: true },
        { name: 'random.fits', make: () => writeFileSync(join(inbox, 'random.fits'), randomBytesFrom(r, 6000)), refused: true },
        { name: 'random.json', make: () => writeFileSync(join(inbox, 'random.json'), randomBytesFrom(r, 3000)), refused: true },
        { name: 'half.fits', make: () => writeFileSync(join(inbox, 'half.fits'), fitsSources[0].subarray(0, fitsSources[0].length >> 1)), refused: true },
        { name: 'junk.fits.gz', make: () => writeFileSync(join(inbox, 'junk.fits.gz'), gzipSync(randomBytesFrom(r, 5000))), refused: true },
        { name: 'notgz.fits.gz', make: () => writeFileSync(join(inbox, 'notgz.fits.gz'), randomBytesFrom(r, 500)), refused: true },
        { name: 'bomb.fits.gz', make: () => writeFileSync(join(inbox, 'bomb.fits.gz'), gzipSync(Buffer.alloc(64 * 2 ** 20))), refused: true },
        { name: 'link.json', make: () => symlinkSync(secret, join(inbox, 'link.json')), refused: true },
        { name: 'zero.fits', make: () => symlinkSync('/dev/zero', join(inbox, 'zero.fits')), refused: true },
        { name: 'sparse.fits', make: () => { writeFileSync(join(inbox, 'sparse.fits'), ''); truncateSync(join(inbox, 'sparse.fits'), 3 * 2 ** 30); }, refused: true },
        { name: 'notes.txt', make: () => writeFileSync(join(inbox, 'notes.txt'), 'hello'), refused: true },
        { name: 'odd name é\nx.json', make: () => writeFileSync(join(inbox, 'odd name é\nx.json'), '{"time":'), refused: true },
        { name: 'grid.json', make: () => writeFileSync(join(inbox, 'grid.json'), JSON.stringify(frameToJson({ ...spotFrame(8, 8, 0.5, [{ x: 2, y: 2, peak: 500, sigma: 0.5 }]), time: lastBase + 60_000 }))), refused: true },
        { name: 'dir.fits', make: () => mkdirSync(join(inbox, 'dir.fits')), refused: false },
        { name: 'pipe.json', make: () => execFileSync('mkfifo', [join(inbox, 'pipe.json')]), refused: false },
        { name: '.hidden.json', make: () => writeFileSync(join(inbox, '.hidden.json'), 'x'), refused: false },
        { name: 'partial.json.part', make: () => writeFileSync(join(inbox, 'partial.json.part'), 'x'), refused: false },
      ];
      for (const j of junk) j.make();
      const expectRefused = junk.filter((j) => j.refused).map((j) => j.name).sort();
      await until('every junk file is moved to refused/', 45_000, () => {
        try { return readdirSync(join(inbox, 'refused')).length >= expectRefused.length; } catch { return false; }
      });
      expect(readdirSync(join(inbox, 'refused')).sort()).toEqual(expectRefused);
      expect(readdirSync(inbox).sort()).toEqual(['.hidden.json', 'dir.fits', 'partial.json.part', 'pipe.json', 'refused']);
      tally.tried += junk.length;
      const refusals = (await getJson<{ refusals: { reason: string; status: number }[] }>(url, '/api/regions/fz/refusals')).refusals;
      expect(refusals.length - refusedBefore).toBe(expectRefused.length);
      expect(JSON.stringify(refusals)).not.toMatch(/sEcReT/);

      // The end: alive, answering, the series before the fuzzing unchanged.
      await waitIdle(url, 60_000);
      expect(m.alive()).toBe(true);
      const after = (await getJson<{ samples: SeriesRow[] }>(url, '/api/regions/fz/series')).samples;
      expect(after.filter((s) => Date.parse(s.time) <= lastBase)).toEqual(base);
      const frames = (await getJson<{ frames: unknown[] }>(url, '/api/regions/fz/frames')).frames;
      expect(frames.length).toBe(5 + tally.accepted);
      expect(m.log()).not.toMatch(/unhandled|processing stopped/);
      console.log(`fuzz: ${JSON.stringify(tally)}; monitor RSS peak ${Math.round(peakRss)} MiB (intake process not included)`);
      expect(tally.fivehundreds).toEqual([]);
      for (const s of Object.keys(tally.answers).map(Number)) expect([200, 201, ...REFUSALS]).toContain(s);
    } finally {
      clearInterval(sampler);
      if (m?.alive()) await m.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  }, 180_000);
});
