// TEST DOUBLE: a small stand-in for the monitor that speaks the docs/api.md contract, for
// developing and testing the page without the real server. Its numbers are invented (no physics):
// a scripted region whose samples, frames, footpoints and alerts the test pushes by hand. It serves
// the built page through the real server/staticPage.ts router.

import express from 'express';
import { createServer, type Server } from 'node:http';
import type { MapWcs } from '../../../web/wire.js';
import type { AddressInfo } from 'node:net';
import { WebSocketServer, type WebSocket } from 'ws';
import { pageRouter } from '../../../server/staticPage.js';
import type {
  FeedStatus, FootpointsAnswer, ReplayInfo, WireAlert, WireFootpoint, WireGap, WireSample,
} from '../../../web/wire.js';

export interface FakeFrame {
  frame_id: number;
  time: string;
  nx: number;
  ny: number;
  dx: number;
  dy: number;
}

/** Everything the double holds; it survives a restart (close + listen on the same port). */
export interface FakeRegionState {
  name: string;
  samples: WireSample[];
  gaps: WireGap[];
  frames: FakeFrame[];
  alerts: WireAlert[];
  refusals: { time_received: string; source: string; reason: string; field: string }[];
  replay: ReplayInfo | null;
  replayActions: { action: string; value?: unknown }[];
  /** World coordinates sent with the maps. */
  wcs?: MapWcs;
  /** A whole-Sun region: its rows carry the sphere's columns (rotation share, hemispheres). */
  sphere?: boolean;
  /** Strands of the invented braid (3: exact entropies; more: lower bounds). */
  braidStrands?: number;
}

export const FAKE_TOKEN = 'fake-token-for-tests';
const T0 = Date.UTC(2026, 2, 14, 6, 0, 0);
const CADENCE_S = 720;
/** The double's gap rule, sent in its snapshot as the monitor sends its region's. */
export const GAP_FACTOR = 3;
const GRID = 96;
const DX = 0.72;

/** The scripted scene at frame k: two spots circling, one negative; values invented. */
function footpointsAt(k: number): WireFootpoint[] {
  const cx = (GRID * DX) / 2;
  const angle = 0.05 * k;
  const r = 12;
  const spots: WireFootpoint[] = [
    { id: 1, polarity: 1, flux: 2.1e21, x: cx + r * Math.cos(angle), y: cx + r * Math.sin(angle), area: 40, omega: 4e-5, omega_method: 'velocity', spin: -1.2e35, spin_point: -1.1e35, partners: [{ id: 2, orbit: -3.4e35 }, { id: 3, orbit: 2e34 }] },
    { id: 2, polarity: -1, flux: -1.9e21, x: cx - r * Math.cos(angle), y: cx - r * Math.sin(angle), area: 36, omega: -1.5e-5, omega_method: 'pattern', omega_error: 3e-5, spin: 4e34, spin_point: 3.8e34, partners: [{ id: 1, orbit: -3.4e35 }] },
    { id: 3, polarity: 1, flux: 4e20, x: cx + 20, y: cx - 22, area: 10, omega: null, omega_method: 'unobservable', omega_note: 'axisymmetric', spin: null, spin_point: null, partners: [{ id: 1, orbit: 2e34 }] },
  ];
  return spots;
}

export function bnMap(k: number): Float32Array {
  const out = new Float32Array(GRID * GRID);
  const fps = footpointsAt(k);
  // The field doubles from frame 30 on, so a colour range taken per frame would jump there.
  const gain = k >= 30 ? 2 : 1;
  for (let iy = 0; iy < GRID; iy++) {
    for (let ix = 0; ix < GRID; ix++) {
      const x = ix * DX;
      const y = iy * DX;
      let v = 8 * Math.sin(ix * 0.9) * Math.cos(iy * 0.7);
      for (const fp of fps) {
        const w = fp.area / Math.PI;
        v += gain * (fp.polarity > 0 ? 1800 : -1700) * Math.exp(-((x - fp.x) ** 2 + (y - fp.y) ** 2) / w) * (fp.id === 3 ? 0.5 : 1);
      }
      out[iy * GRID + ix] = ix < 3 && iy > GRID - 10 ? Number.NaN : v; // a no-data corner
    }
  }
  return out;
}

function gthetaMap(k: number): Float32Array {
  const bn = bnMap(k);
  const out = new Float32Array(bn.length);
  for (let i = 0; i < bn.length; i++) out[i] = Number.isNaN(bn[i]) ? Number.NaN : -bn[i] * Math.abs(bn[i]) * 1e-3 * Math.sin(i * 0.001);
  return out;
}

export function newRegionState(name = 'demo', options: { sphere?: boolean; braidStrands?: number } = {}): FakeRegionState {
  return { name, samples: [], gaps: [], frames: [], alerts: [], refusals: [], replay: null, replayActions: [], ...options };
}

/** The frame from which the invented braid starts its second segment. */
export const BRAID_SECOND_SEGMENT = 12;

/**
 * An invented braid over the region's frames (the shape of GET /braid, docs/api.md): footpoints
 * 1, 2, 3 (and 4, 5 with more strands) stirred at about the golden-mean protocol's pace, 0.962 per
 * 6 h period (so about 0.16 per hour); a second segment from frame 12 (a footpoint outgrew
 * another); the window's one triple braided with every pair's net winding 0. Values invented.
 */
export function braidAnswer(r: FakeRegionState): unknown {
  const strands = r.braidStrands ?? 3;
  const ids = Array.from({ length: strands }, (_, i) => i + 1);
  const exact = strands <= 3;
  const frames = r.frames;
  const segmentStart = (k: number) => (k >= BRAID_SECOND_SEGMENT ? BRAID_SECOND_SEGMENT : 0);
  const windowRate = (k: number) => (k === segmentStart(k) ? null : 0.16 + 0.03 * Math.sin(k / 4));
  const series = frames.map((f) => {
    const k = f.frame_id;
    return { frame_id: k, time: f.time, braid_entropy_rate: windowRate(k), braid_entropy_rate_run: k === 0 ? null : 0.15, braid_strands: strands, braid_flagged_triples: k === segmentStart(k) ? null : 1 };
  });
  const last = frames.at(-1);
  const iso = (ms: number) => new Date(ms).toISOString();
  const tripleIds = [1, 2, 3];
  const span = (fromK: number, toK: number) => {
    const hours = ((toK - fromK) * CADENCE_S) / 3600;
    const entropy = 0.16 * hours;
    return {
      start: iso(T0 + fromK * CADENCE_S * 1000), end: iso(T0 + toK * CADENCE_S * 1000), hours, frames: toK - fromK + 1, axisDeg: 12,
      entropy, ratePerHour: hours > 0 ? entropy / hours : null, method: exact ? 'burau-sl2z' : 'burau-unit-circle-bound', exact,
      generators: 18, crossingHelicity: 0, collisions: 0,
      triples: [
        { ids: tripleIds, entropy: 2.887, trivial: false, pure: true, flagged: true, pairCrossings: [0, 0, 0], windingTurns: [0.004, -0.003, 0.002], milnor: 1 },
        ...(strands > 3 ? [{ ids: [1, 2, 4], entropy: 0.48, trivial: false, pure: false, flagged: false, pairCrossings: [2, 0, -1], windingTurns: [1.02, 0.1, -0.5], milnor: null }] : []),
      ],
    };
  };
  const k = last?.frame_id ?? 0;
  const from = Math.max(segmentStart(k), k - 30); // a 6 h window at 12-minute frames
  return {
    region: r.name,
    series,
    last: last ? {
      time: last.time, strands: ids, segmentStarted: k === segmentStart(k) ? 'footpoint 4 outgrew footpoint 3' : null,
      segment: span(segmentStart(k), k), window: k > from ? { ...span(from, k), word: [] } : null,
      run: { segments: k >= BRAID_SECOND_SEGMENT ? 2 : 1, entropy: 0.15 * (k * CADENCE_S) / 3600, hours: (k * CADENCE_S) / 3600, ratePerHour: k > 0 ? 0.15 : null, exact },
    } : null,
    segments: frames.filter((f) => f.frame_id === 0 || f.frame_id === BRAID_SECOND_SEGMENT).map((f) => ({
      time: f.time, reason: f.frame_id === 0 ? 'first frame' : 'footpoint 4 outgrew footpoint 3', strands: ids,
    })),
  };
}

export class FakeMonitor {
  private server: Server | undefined;
  private wss: WebSocketServer | undefined;
  private viewers = new Set<WebSocket>();
  port = 0;
  /** Messages viewers sent (backfill requests), for the tests to inspect. */
  received: unknown[] = [];
  /** How many times the braid route was asked (the page throttles it). */
  braidRequests = 0;

  constructor(readonly regions: Map<string, FakeRegionState>, private readonly pageDir: string, private readonly options: { protectReads?: boolean } = {}) {}

  get url(): string {
    return `http://127.0.0.1:${this.port}`;
  }

  async listen(port = 0): Promise<void> {
    const app = express();
    app.use(express.json());
    app.use('/', pageRouter(this.pageDir));
    const region = (req: express.Request, res: express.Response): FakeRegionState | undefined => {
      const r = this.regions.get(String(req.params.region));
      if (!r) res.status(404).json({ error: 'no such region', field: 'region', problem: String(req.params.region) });
      return r;
    };
    const authorised = (req: express.Request, res: express.Response): boolean => {
      if (req.get('authorization') === `Bearer ${FAKE_TOKEN}`) return true;
      res.status(401).json({ error: 'token needed', field: 'Authorization', problem: 'missing or wrong bearer token' });
      return false;
    };
    if (this.options.protectReads) {
      app.use('/api', (req, res, next) => {
        if (req.get('authorization') === `Bearer ${FAKE_TOKEN}`) return next();
        res.status(401).json({ error: 'token needed', field: 'Authorization', problem: 'reading is protected' });
      });
    }
    app.get('/api/health', (_req, res) => res.json({ ok: true, uptime_s: 1, regions: this.regions.size, queue: 0 }));
    app.get('/api/regions', (_req, res) => {
      res.json({
        regions: [...this.regions.values()].map((r) => ({
          name: r.name, created: new Date(T0).toISOString(), settings: {}, frames: r.frames.length,
          last_frame_time: r.frames.at(-1)?.time ?? null, last_sample_time: r.samples.at(-1)?.time ?? null, replay: r.replay,
        })),
      });
    });
    app.get('/api/regions/:region/series', (req, res) => {
      const r = region(req, res);
      if (r) res.json({ region: r.name, samples: r.samples, gaps: r.gaps });
    });
    app.get('/api/regions/:region/frames', (req, res) => {
      const r = region(req, res);
      if (r) res.json({ frames: r.frames.map((f) => ({ ...f, source: 'fake' })) });
    });
    app.get('/api/regions/:region/frames/:id/footpoints', (req, res) => {
      const r = region(req, res);
      if (!r) return;
      const k = Number(req.params.id);
      const f = r.frames.find((x) => x.frame_id === k);
      if (!f) return void res.status(404).json({ error: 'no such frame', field: 'id', problem: String(req.params.id) });
      const tracks: FootpointsAnswer['tracks'] = {};
      for (const fp of footpointsAt(k)) {
        tracks[String(fp.id)] = [];
        for (let j = Math.max(0, k - 6); j <= k; j++) {
          const p = footpointsAt(j).find((q) => q.id === fp.id);
          if (p) tracks[String(fp.id)].push([p.x, p.y]);
        }
      }
      res.json({ frame_id: k, time: f.time, footpoints: footpointsAt(k), tracks });
    });
    app.get('/api/regions/:region/frames/:id/map', (req, res) => {
      const r = region(req, res);
      if (!r) return;
      const k = Number(req.params.id);
      const f = r.frames.find((x) => x.frame_id === k);
      if (!f) return void res.status(404).json({ error: 'no such frame', field: 'id', problem: String(req.params.id) });
      const layer = String(req.query.layer ?? 'bn');
      const data = layer === 'gtheta' ? gthetaMap(k) : bnMap(k);
      res.json({
        frame_id: k, time: f.time, layer, unit: layer === 'gtheta' ? 'Mx^2 s^-1 cm^-2' : 'G', nx: GRID, ny: GRID, dx: DX, dy: DX,
        encoding: 'float32-base64', data: Buffer.from(data.buffer).toString('base64'), ...(r.wcs && { wcs: r.wcs }),
      });
    });
    app.get('/api/regions/:region/braid', (req, res) => {
      const r = region(req, res);
      if (!r) return;
      this.braidRequests++;
      res.json(braidAnswer(r));
    });
    app.get('/api/regions/:region/alerts', (req, res) => {
      const r = region(req, res);
      if (r) res.json({ alerts: r.alerts });
    });
    app.post('/api/regions/:region/alerts/:id/ack', (req, res) => {
      const r = region(req, res);
      if (!r || !authorised(req, res)) return;
      const a = r.alerts.find((x) => String(x.id) === req.params.id);
      if (!a) return void res.status(404).json({ error: 'no such alert', field: 'id', problem: req.params.id });
      const acked = { ...a, acknowledged: true };
      r.alerts[r.alerts.indexOf(a)] = acked;
      this.broadcast({ type: 'alert', alert: acked });
      res.json(acked);
    });
    app.get('/api/regions/:region/refusals', (req, res) => {
      const r = region(req, res);
      if (r) res.json({ refusals: r.refusals });
    });
    app.get('/api/regions/:region/export.csv', (req, res) => {
      const r = region(req, res);
      if (!r) return;
      const cols = ['time', 'dt_s', 'rate_total', 'rate_spin', 'rate_orbit', 'rate_background', 'budget_total', 'budget_spin', 'budget_orbit'] as const;
      res.type('text/csv').send([cols.join(','), ...r.samples.map((s) => cols.map((c) => String(s[c] ?? '')).join(','))].join('\n') + '\n');
    });
    app.post('/api/regions/:region/replay', (req, res) => {
      const r = region(req, res);
      if (!r || !authorised(req, res)) return;
      r.replayActions.push(req.body);
      if (r.replay) {
        const { action, value } = req.body as { action: string; value?: number };
        if (action === 'pause') r.replay.state = 'paused';
        if (action === 'resume') r.replay.state = 'playing';
        if (action === 'speed') r.replay.speed = Number(value);
        if (action === 'seek') r.replay.position = Number(value);
        this.broadcast({ type: 'status', status: this.status(r) });
      }
      res.json({ replay: r.replay });
    });

    this.server = createServer(app);
    this.wss = new WebSocketServer({ noServer: true });
    this.server.on('upgrade', (req, socket, head) => {
      const u = new URL(req.url ?? '/', 'http://x');
      const r = this.regions.get(u.searchParams.get('region') ?? '');
      const readOk = !this.options.protectReads || u.searchParams.get('token') === FAKE_TOKEN;
      if (u.pathname !== '/ws/view' || !r || !readOk) {
        socket.destroy();
        return;
      }
      this.wss!.handleUpgrade(req, socket, head, (ws) => {
        this.viewers.add(ws);
        ws.on('close', () => this.viewers.delete(ws));
        ws.on('message', (data) => {
          let m: { type?: string; since?: string };
          try {
            m = JSON.parse(String(data));
          } catch {
            return;
          }
          this.received.push(m);
          if (m.type === 'backfill' && typeof m.since === 'string') {
            const since = Date.parse(m.since);
            ws.send(JSON.stringify({ type: 'backfill', samples: r.samples.filter((s) => Date.parse(s.time) > since) }));
          }
        });
        ws.send(JSON.stringify(this.snapshot(r)));
      });
    });
    await new Promise<void>((resolve, reject) => {
      this.server!.once('error', reject);
      this.server!.listen(port, '127.0.0.1', () => resolve());
    });
    this.port = (this.server.address() as AddressInfo).port;
  }

  async close(): Promise<void> {
    for (const ws of this.viewers) ws.terminate();
    this.viewers.clear();
    this.wss?.close();
    await new Promise<void>((resolve) => {
      if (!this.server) return resolve();
      this.server.close(() => resolve());
      this.server.closeAllConnections();
    });
    this.server = undefined;
  }

  /** A short snapshot (the last 50 samples): the page must combine it with its HTTP history. */
  snapshot(r: FakeRegionState): unknown {
    const last = r.frames.at(-1);
    return {
      type: 'snapshot', region: r.name, samples: r.samples.slice(-50), gaps: r.gaps, alerts: r.alerts, status: this.status(r),
      latest_frame: last ? { frame_id: last.frame_id, time: last.time } : null,
      gap_factor: GAP_FACTOR,
    };
  }

  /** What the monitor does after a rewind: a fresh snapshot to every viewer. */
  resync(r: FakeRegionState): void {
    this.broadcast(this.snapshot(r));
  }

  status(r: FakeRegionState): FeedStatus {
    return { last_frame_time: r.frames.at(-1)?.time ?? null, cadence_s: CADENCE_S, refusals: r.refusals.length, gaps: r.gaps.length, queue: 0, queue_limit: 16, disk_full: false, replay: r.replay };
  }

  broadcast(message: unknown): void {
    const data = JSON.stringify(message);
    for (const ws of this.viewers) if (ws.readyState === ws.OPEN) ws.send(data);
  }
}

/** The scripted unsigned flux at frame k, Mx: growing as the region emerges (invented). */
export function fluxAt(k: number): number {
  return 4.4e21 * (1 + 0.02 * k);
}

/** A Carrington CEA grid for the double's 96 x 96 maps: 0.0593 deg pixels (0.72 Mm at one solar
 *  radius, 696 Mm: 0.72 / (696 pi / 180)), centred at Carrington 121.25, -18.5 (invented). */
export const CEA_WCS: MapWcs = {
  ctype: ['CRLN-CEA', 'CRLT-CEA'], cunit: ['deg', 'deg'], crpix: [48.5, 48.5], crval: [121.25, -18.5], cdelt: [0.0593, 0.0593], pc: [1, 0, 0, 1], pv: {},
};

/** Adds frame k (and its sample) to the state; with a monitor, tells its viewers. */
export function pushFrame(r: FakeRegionState, k: number, monitor?: FakeMonitor, options: { skipGapBefore?: boolean } = {}): WireSample {
  const t = new Date(T0 + k * CADENCE_S * 1000).toISOString();
  const prev = r.samples.at(-1);
  if (options.skipGapBefore && prev) r.gaps.push({ from: prev.time, to: t, bridged: true });
  const rate = 2e36 + 1.5e36 * Math.sin(k / 6);
  const budget = (prev?.budget_total ?? 0) + rate * CADENCE_S;
  const sample: WireSample = {
    time: t, dt_s: CADENCE_S, rate_total: rate, rate_spin: 0.3 * rate, rate_orbit: 0.6 * rate, rate_background: 0.1 * rate,
    budget_total: budget, budget_spin: 0.3 * budget, budget_orbit: 0.6 * budget, budget_background: 0.1 * budget,
    rate_total_ga: rate, rate_emergence: null, rate_shear: null, sigma_rate_total: 2e35, sigma_budget_total: 2e35 * CADENCE_S * Math.sqrt(k + 1),
    velocity_method: 'dave', split_method: 'labels', noise_g: 6, masked_fraction: 0.01, flags: ['spin-unobservable'], frame_id: k,
    flux_unsigned: fluxAt(k), budget_normalised: budget / fluxAt(k) ** 2,
    sigma_rate_spin: 0, sigma_rate_orbit: 0, centre_lon_deg: null, centre_lat_deg: null, centre_disk_angle_deg: null,
    ...(r.sphere && sphereColumns(rate, prev)),
  };
  r.samples.push(sample);
  r.frames.push({ frame_id: k, time: t, nx: GRID, ny: GRID, dx: DX, dy: DX });
  if (monitor) {
    monitor.broadcast({ type: 'sample', sample });
    monitor.broadcast({ type: 'frame', frame_id: k, time: t });
    monitor.broadcast({ type: 'status', status: monitor.status(r) });
  }
  return sample;
}

/**
 * The sphere's columns of a whole-Sun row (invented): the differential rotation injects a steady
 * -6e35 Mx^2/s, the rest is the region's own motions; 70 % of the rate sits north.
 */
function sphereColumns(rate: number, prev: WireSample | undefined): Partial<WireSample> {
  const rotation = -6e35;
  const north = 0.7 * rate, south = 0.3 * rate;
  return {
    rate_rotation: rotation, rate_own_motions: rate - rotation, rate_north: north, rate_south: south,
    budget_rotation: (prev?.budget_rotation ?? 0) + rotation * CADENCE_S,
    budget_north: (prev?.budget_north ?? 0) + north * CADENCE_S,
    budget_south: (prev?.budget_south ?? 0) + south * CADENCE_S,
    planar_departure: null,
  };
}

/** Raises the accumulated-budget rule at the newest sample (evidence from that sample). */
export function raiseBudgetAlert(r: FakeRegionState, threshold: number, monitor?: FakeMonitor): WireAlert {
  const s = r.samples.at(-1)!;
  const risingAt = r.samples.at(-2)?.time ?? s.time;
  const alert: WireAlert = {
    id: 'budget-1', rule: 'budget-emerging', state: 'raised', since: s.time, threshold, unit: 'Mx^2',
    source: 'Liokati et al. 2022', evidence: { value: s.budget_total ?? 0, window_from: s.time, window_to: s.time, threshold, sigma: s.sigma_budget_total, sigma_factor: 2 },
    acknowledged: false,
    history: [
      { time: risingAt, from: 'quiet', to: 'rising' },
      { time: s.time, from: 'rising', to: 'raised', evidence: { value: s.budget_total } },
    ],
  };
  r.alerts = r.alerts.filter((a) => a.id !== alert.id).concat(alert);
  monitor?.broadcast({ type: 'alert', alert });
  return alert;
}

/**
 * Two more rules raised within a few minutes of the budget alert (so their chart markers would
 * collide), and the quiet rules as the monitor sends them: evidence from the moment each rule was
 * made (stale), which the page must not show as current. Values invented.
 */
export function raiseCrowdedAlerts(r: FakeRegionState, monitor?: FakeMonitor): WireAlert[] {
  const s = r.samples.at(-1)!;
  const before = r.samples.at(-2)!;
  const first = r.samples[0];
  const raisedAt = (id: string, rule: string, time: string, threshold: number, unit: string, source: string, evidence: WireAlert['evidence']): WireAlert => ({
    id, rule, state: 'raised', since: time, threshold, unit, source, evidence, acknowledged: false,
    history: [{ time, from: 'rising', to: 'raised', ...(evidence && { evidence }) }],
  });
  const quiet = (id: string, rule: string, threshold: number, unit: string, source: string, evidence: WireAlert['evidence']): WireAlert => ({
    id, rule, state: 'quiet', since: first.time, threshold, unit, source, evidence, acknowledged: false, history: [],
  });
  const alerts = [
    raisedAt('peak-rate', 'peak-rate', before.time, 3e36, 'Mx^2/s', 'a level set for the test region (the published default is 6e36 Mx^2/s, LaBonte, Georgoulis & Rust 2007)',
      { value: 3.4e36, window_from: r.samples.at(-4)!.time, window_to: before.time, threshold: 3e36, sigma: 2e35, sigma_factor: 2 }),
    raisedAt('sign-reversal', 'sign-reversal', s.time, 0, 'Mx^2/s', 'our rule (no published level)',
      { value: 3.1e36, window_from: before.time, window_to: s.time, threshold: 4e35, rate: 3.1e36, budget: -2.2e42, sigma: 2e35, budget_floor: 9e39 }),
    quiet('budget', 'budget', 2e42, 'Mx^2', 'Tziotziou, Georgoulis & Raouafi 2012 (ApJL 759, L4): eruptive active regions sit above 2e42 Mx^2',
      { value: 0, window_from: first.time, window_to: first.time, threshold: 2e42, sigma: 0, sigma_factor: 2 }),
    quiet('build-up-plateau', 'build-up-plateau', 3e42, 'Mx^2', 'Park et al. 2010',
      { value: 0, window_from: first.time, window_to: first.time, threshold: 3e42, plateau_s: 2160, phase_s: 114000, sign: 0, within_published_range: false }),
    quiet('data-gap', 'data-gap', 0, 's', 'our rule', { value: 0, window_from: first.time, window_to: first.time, threshold: 0, bridged: null }),
    quiet('refusals', 'refusals', 3, 'frames', 'our rule: 3 or more frames refused within an hour', { value: 0, window_from: first.time, window_to: first.time, threshold: 3 }),
  ];
  for (const a of alerts) {
    r.alerts = r.alerts.filter((x) => x.id !== a.id).concat(a);
    monitor?.broadcast({ type: 'alert', alert: a });
  }
  return alerts;
}
