// The HTTP routes of docs/api.md (express 5). Region names and frame ids are checked before they
// are used; file paths are only ever built from a checked region name and ids from the store.
// The routes of a region are four routers mounted at /api/regions/:region (ingest, managing,
// the series, frames) sharing one set of helpers; every route that changes something takes the
// `requireToken` middleware before its body is read, and checks the body before it writes anything.
import express from 'express';
import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { InputError } from '../core/inputError.js';
import { parseIsoTime } from '../core/frameJson.js';
import { seriesCsv, SERIES_COLUMNS } from '../core/seriesColumns.js';
import { writeFits } from '../core/fits/writeImage.js';
import type { ImageToWrite } from '../core/fits/writeImage.js';
import { gridImage } from '../replay/mapImages.js';
import type { Frame } from '../core/frame.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import { frameWcs } from '../core/frameAssembly/wcs.js';
import { isLoopback, tokenMatches } from './auth.js';
import { isDiskFull } from './diskFull.js';
import type { HostPolicy } from './hostCheck.js';
import { hostAllowed, originAllowed } from './hostCheck.js';
import { decodeFrameBlob, readFrameBlobHeader } from './frameBlob.js';
import type { FootpointReport } from '../core/footpoints/footpointReport.js';
import { footpointsForWire, tracksForWire } from '../core/wire/footpointWire.js';
import { gapsForWire } from '../core/wire/gapWire.js';
import { braidColumns, braidReportJson } from '../core/braid/braidColumns.js';
import type { BraidRouteAnswer } from '../core/wire/braidWire.js';
import type { BraidViews } from './braidViews.js';
import type { Pipeline } from './pipeline.js';
import type { RegionAdmin } from './regionAdmin.js';
import { checkRegionName } from './regionName.js';
import { DEFAULT_SETTINGS, mergeSettings } from './regionSettings.js';
import type { FrameRow, Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';

export interface ApiContext {
  readonly store: Store;
  readonly writer: StoreWriter;
  readonly pipeline: Pipeline;
  readonly token: string;
  readonly readToken: boolean;
  readonly bodyLimit: number;
  readonly startedAt: number;
  readonly onSettings: (region: string) => void;
  /** Replay control and start (server/replayRegistry.ts). */
  readonly replay: (region: string, action: unknown) => { status: number; body: unknown } | Promise<{ status: number; body: unknown }>;
  readonly replayStatus: (region: string) => unknown;
  /** Removing, renaming and resetting regions (server/regionAdmin.ts). */
  readonly regions: Pick<RegionAdmin, 'remove' | 'rename' | 'reset'>;
  /** The event loop's delay, ms (max and 99th percentile over the last few seconds). */
  readonly loopDelay?: () => { max: number; p99: number };
  /** Compute workers still in their warm-up (server/analysisWarmUp.ts). */
  readonly warmingUp?: () => number;
  /** The dashboard page (server/staticPage.ts), mounted at / after the API. */
  readonly page?: express.Router;
  /** Host names (besides loopback) this monitor answers to (server/hostCheck.ts). */
  readonly hosts: HostPolicy;
  /** The braid of each region's footpoints, folded over the stored frames (server/braidViews.ts). */
  readonly braids: BraidViews;
}

function fail(res: Response, status: number, field: string, problem: string, error = problem): void {
  res.status(status).json({ error, field, problem });
}

function inputFail(res: Response, status: number, e: InputError): void {
  res.status(status).json({ error: e.message, field: e.field, problem: e.problem });
}

const iso = (t: number | undefined | null) => (t === undefined || t === null ? null : new Date(t).toISOString());

/** What the routers share: the token check, the path checks, answers in the error shape of docs/api.md. */
interface ApiHelpers {
  /**
   * Middleware of every route that changes something: 401 for a request without the monitor's
   * token (counted in memory, nothing stored), before its body is read. `what` names the action
   * in the answer: requireToken('a settings change').
   */
  requireToken(what: string): RequestHandler;
  /** Middleware: the path's region name checked (400 otherwise). */
  readonly regionName: RequestHandler;
  /** Middleware: the path names a region that exists (400, 404 otherwise). */
  readonly existingRegion: RequestHandler;
  /** The path's region name checked, or undefined with the 400 sent. */
  regionOf(req: Request, res: Response): string | undefined;
  /** The path's region, existing, or undefined with the 400 or 404 sent. */
  existing(req: Request, res: Response): string | undefined;
  /** The path's frame of the path's region, or undefined with the 400 or 404 sent. */
  frameOf(req: Request, res: Response): FrameRow | undefined;
  /** A `from`/`to` query time (ISO), or the fallback. */
  timeParam(req: Request, key: 'from' | 'to', fallback: number): number;
}

function apiHelpers(ctx: ApiContext): ApiHelpers {
  const { store, pipeline, token } = ctx;
  const requireToken = (what: string) => (req: Request, res: Response, next: NextFunction): void => {
    if (tokenMatches(token, req.get('authorization'))) return next();
    pipeline.noteUnauthorized(`${req.method} ${req.originalUrl.split('?')[0].slice(0, 120)} from ${req.socket.remoteAddress ?? '?'}`);
    fail(res, 401, 'authorization', `${what} needs "Authorization: Bearer <token>" with the monitor's token`, 'token needed');
  };
  // A region name from the path, checked (400 otherwise).
  const regionOf = (req: Request, res: Response): string | undefined => {
    try {
      return checkRegionName(req.params.region, 'path');
    } catch (e) {
      inputFail(res, 400, e as InputError);
      return undefined;
    }
  };
  const existing = (req: Request, res: Response): string | undefined => {
    const name = regionOf(req, res);
    if (name === undefined) return undefined;
    if (!store.region(name)) { fail(res, 404, 'region', `no region named "${name}"`); return undefined; }
    return name;
  };
  const regionName = (req: Request, res: Response, next: NextFunction): void => { if (regionOf(req, res) !== undefined) next(); };
  const existingRegion = (req: Request, res: Response, next: NextFunction): void => { if (existing(req, res) !== undefined) next(); };
  const timeParam = (req: Request, key: 'from' | 'to', fallback: number): number => {
    const v = req.query[key];
    if (v === undefined || v === '') return fallback;
    return parseIsoTime(String(v), key, 'query');
  };
  const frameOf = (req: Request, res: Response): FrameRow | undefined => {
    const name = existing(req, res);
    if (name === undefined) return undefined;
    const raw = String(req.params.id);
    if (!/^\d{1,15}$/.test(raw)) { fail(res, 400, 'id', `"${raw.slice(0, 40)}" is not a frame id`); return undefined; }
    const f = store.frame(name, Number(raw));
    if (!f) { fail(res, 404, 'id', `region ${name} has no frame ${raw}`); return undefined; }
    return f;
  };
  return { requireToken, regionName, existingRegion, regionOf, existing, frameOf, timeParam };
}

/** A router for the routes under /api/regions/:region (the name is in req.params.region). */
const regionRouter = () => express.Router({ mergeParams: true });

/** Ingest: POST /frames. */
function ingestRoutes(ctx: ApiContext, h: ApiHelpers): express.Router {
  const { pipeline } = ctx;
  const { regionName, requireToken } = h;
  const r = regionRouter();
  // Ingest. The token and the region's queue are checked before the body is read, so an
  // unauthorised sender cannot make us buffer a large body, and a sender faster than the
  // computation is told to wait (503 with Retry-After) instead of growing the queue.
  r.post('/frames', regionName, requireToken('ingest'), (req, res, next) => {
    const name = req.params.region as string;
    if (!pipeline.admit(name)) {
      res.set('Retry-After', String(pipeline.retryAfterS()));
      return fail(res, 503, '(queue)', `region ${name} has ${pipeline.regionQueue(name)} frames waiting (the bound is ${pipeline.queueLimit}): send this one again after Retry-After seconds`, 'queue full');
    }
    // The place in the queue is held until the answer has gone (or the sender went away).
    res.once('close', () => pipeline.release(name));
    next();
  }, express.raw({ type: () => true, limit: ctx.bodyLimit }), async (req, res) => {
    const name = req.params.region as string;
    const type = (req.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
    const body = req.body as Buffer;
    const source = `http:${req.get('x-frame-source')?.slice(0, 200) ?? 'POST'}`;
    let payload;
    if (type === 'application/json') payload = { kind: 'json' as const, bytes: Buffer.isBuffer(body) ? body : Buffer.alloc(0) };
    else if (type === 'application/fits' || type === 'image/fits') payload = { kind: 'fits' as const, bytes: new Uint8Array(body) };
    else {
      const a = await pipeline.refuse(name, 415, source, 'content-type', `content type "${type || '(none)'}" is not a frame: send application/json or application/fits`);
      return void res.status(a.status).json(a.body);
    }
    const answer = await pipeline.ingest({ region: name, payload, source, mayCreate: true, admitted: true });
    if ('retryAfterS' in answer && answer.retryAfterS !== undefined) res.set('Retry-After', String(answer.retryAfterS));
    res.status(answer.status).json(answer.body);
  });

  return r;
}

/** Managing a region (token): settings, removal, rename, reset, replay control. */
function manageRoutes(ctx: ApiContext, h: ApiHelpers): express.Router {
  const { store, writer } = ctx;
  const { regionName, requireToken } = h;
  const r = regionRouter();
  // Settings of a region; the first settings of a new name make the region. The body is checked
  // before anything is written: a bad body makes no region.
  r.put('/settings', regionName, requireToken('a settings change'), express.json({ limit: '1mb', type: () => true }), async (req, res) => {
    const name = req.params.region as string;
    try {
      mergeSettings(store.region(name)?.settings ?? DEFAULT_SETTINGS, req.body);
    } catch (e) {
      if (e instanceof InputError) return inputFail(res, 400, e);
      throw e;
    }
    const row = store.region(name) ?? await writer.call('createRegion', name);
    // Merged again onto what the region holds now (made meanwhile by a frame, say).
    const next = mergeSettings(row.settings, req.body);
    await writer.call('saveSettings', name, next);
    ctx.onSettings(name);
    res.json({ region: name, settings: next });
  });

  // Managing a region (token): remove it, rename it, reset its grid. The token is checked before
  // the body is read; a refusal changes nothing stored.
  r.delete('/', regionName, requireToken('removing a region'), async (req, res) => {
    const a = await ctx.regions.remove(req.params.region as string);
    res.status(a.status).json(a.body);
  });

  for (const action of ['rename', 'reset'] as const) {
    r.post(`/${action}`, regionName, requireToken(action === 'rename' ? 'renaming a region' : 'resetting a region'), express.json({ limit: '64kb', type: () => true }), async (req, res) => {
      const name = req.params.region as string;
      const a = action === 'rename' ? await ctx.regions.rename(name, req.body) : await ctx.regions.reset(name, req.body);
      res.status(a.status).json(a.body);
    });
  }

  // Replay control; `start` may name a region that does not exist yet (the replay creates it).
  r.post('/replay', regionName, requireToken('replay control'), express.json({ limit: '64kb', type: () => true }), async (req, res) => {
    const name = req.params.region as string;
    const start = (req.body as { action?: unknown } | undefined)?.action === 'start';
    if (!start && !store.region(name)) return fail(res, 404, 'region', `no region named "${name}"`);
    const r = await ctx.replay(name, req.body);
    res.status(r.status).json(r.body);
  });

  return r;
}

/** The series and what goes with it: samples and gaps, alerts and their acknowledgement, refusals, exports. */
function seriesRoutes(ctx: ApiContext, h: ApiHelpers): express.Router {
  const { store, pipeline } = ctx;
  const { regionName, existingRegion, requireToken, existing, timeParam } = h;
  const r = regionRouter();
  // The braid columns of each row, from the braid folded over the stored frames (the rows are
  // stored as the frame is committed, before the braid view sees it): as `process` writes them.
  const withBraid = async (name: string, rows: SeriesRow[]): Promise<SeriesRow[]> => {
    const h = await ctx.braids.history(name);
    if (h.reports.size === 0) return rows;
    return rows.map((row) => {
      const b = row.frame_id === null ? undefined : h.reports.get(row.frame_id);
      return b ? { ...row, ...braidColumns(b) } : row;
    });
  };
  r.get('/series', async (req, res) => {
    const name = existing(req, res);
    if (name === undefined) return;
    const from = timeParam(req, 'from', 0), to = timeParam(req, 'to', Number.MAX_SAFE_INTEGER);
    const gaps = gapsForWire(pipeline.accumulation(name).budget.gaps, { from, to });
    res.json({ region: name, samples: await withBraid(name, store.samples(name, from, to)), gaps });
  });

  // The braid of the largest footpoints (docs/braids.md): per frame, the window's and the run's
  // entropy per hour, the strands and the triples braided unseen by the pair budget; the last
  // frame's report (segment, window with its word and triples, run); where segments began.
  r.get('/braid', async (req, res) => {
    const name = existing(req, res);
    if (name === undefined) return;
    const from = timeParam(req, 'from', 0), to = timeParam(req, 'to', Number.MAX_SAFE_INTEGER);
    const h = await ctx.braids.history(name);
    const series = h.keys.flatMap((id) => {
      const b = h.reports.get(id);
      return b && b.time >= from && b.time <= to ? [{ frame_id: id, time: new Date(b.time).toISOString(), ...braidColumns(b) }] : [];
    });
    const answer: BraidRouteAnswer = {
      region: name, series,
      last: h.last ? braidReportJson(h.last) : null,
      segments: h.segments.map((g) => ({ time: new Date(g.time).toISOString(), reason: g.reason, strands: g.strands })),
    };
    res.json(answer);
  });

  r.get('/alerts', (req, res) => {
    const name = existing(req, res);
    if (name === undefined) return;
    res.json({ alerts: pipeline.alerts(name) });
  });

  r.post('/alerts/:id/ack', existingRegion, requireToken('acknowledging'), async (req, res) => {
    const name = req.params.region as string;
    const id = String(req.params.id);
    const alert = await pipeline.acknowledge(name, id);
    if (!alert) return fail(res, 404, 'id', `region ${name} has no alert "${id.slice(0, 40)}" yet`);
    res.json(alert);
  });

  // Refusals of a region, and of a name that never became one (frames sent to it were all refused:
  // the sender reads why here); 404 for a name with neither.
  r.get('/refusals', regionName, (req, res) => {
    const name = req.params.region as string;
    const refusals = store.refusals(name);
    if (!store.region(name) && refusals.length === 0) return fail(res, 404, 'region', `no region named "${name}" and no refusal recorded under that name`);
    res.json({ refusals });
  });

  r.get('/export.csv', async (req, res) => {
    const name = existing(req, res);
    if (name === undefined) return;
    const rows = await withBraid(name, store.samples(name));
    res.type('text/csv').set('content-disposition', `attachment; filename="${name}-series.csv"`).send(seriesCsv(rows));
  });

  r.get('/export.json', async (req, res) => {
    const name = existing(req, res);
    if (name === undefined) return;
    const gaps = gapsForWire(pipeline.accumulation(name).budget.gaps);
    res.json({ region: name, columns: SERIES_COLUMNS, samples: await withBraid(name, store.samples(name)), gaps });
  });

  return r;
}

/** Frames: the list, removal, footpoints, maps and maps as FITS. */
function frameRoutes(ctx: ApiContext, h: ApiHelpers): express.Router {
  const { store, pipeline } = ctx;
  const { requireToken, existing, frameOf, timeParam } = h;
  const r = regionRouter();
  r.get('/frames', (req, res) => {
    const name = existing(req, res);
    if (name === undefined) return;
    const from = timeParam(req, 'from', 0), to = timeParam(req, 'to', Number.MAX_SAFE_INTEGER);
    res.json({
      frames: store.framesInRange(name, from, to).map((f) => ({
        frame_id: f.id, time: iso(f.time), nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy, source: f.source,
        processed: f.processed === 1, note: f.waiting,
      })),
    });
  });


  // Removing a frame (token): the region's series is recomputed from its other stored frames.
  r.delete('/frames/:id', requireToken('removing a frame'), async (req, res) => {
    const f = frameOf(req, res);
    if (!f) return;
    const r = await pipeline.removeFrame(f.region, f.id);
    res.json({ region: f.region, removed: r });
  });

  // Footpoints of a frame in the wire's shape (core/wire/footpointWire.ts, docs/api.md), with
  // tracks: each footpoint id's centroids over the last 20 frames.
  r.get('/frames/:id/footpoints', (req, res) => {
    const f = frameOf(req, res);
    if (!f) return;
    const { footpoints, events } = store.footpoints(f.id);
    const tracks = tracksForWire(store.recentFootpoints(f.region, f.time, 20) as (FootpointReport | null)[]);
    res.json({ frame_id: f.id, time: iso(f.time), footpoints: footpointsForWire(footpoints as FootpointReport | null), tracks, events: events ?? [] });
  });

  // A Map, not an object: a layer named after an Object.prototype member ("toString") is no layer.
  const LAYERS = new Map<string, { unit: string; from: 'frame' | 'maps'; name: string; int?: boolean }>([
    ['bn', { unit: 'G', from: 'frame', name: 'bn' }],
    ['gtheta', { unit: 'Mx^2 cm^-2 s^-1', from: 'maps', name: 'gtheta' }],
    ['labels', { unit: '', from: 'maps', name: 'labels', int: true }],
  ]);

  r.get('/frames/:id/map', async (req, res) => {
    const f = frameOf(req, res);
    if (!f) return;
    const layer = String(req.query.layer ?? 'bn');
    const spec = LAYERS.get(layer);
    if (!spec) return fail(res, 400, 'layer', `"${layer.slice(0, 40)}" is not a layer (bn, gtheta, labels)`);
    const file = spec.from === 'frame' ? f.file : f.mapsFile;
    if (!file) return fail(res, 404, 'layer', `frame ${f.id} has no ${layer} map (not computed)`);
    const content = decodeFrameBlob(await readFile(join(store.dataDir, file)), file);
    const values = spec.int ? (Object.hasOwn(content.int, spec.name) ? content.int[spec.name] : undefined) : (Object.hasOwn(content.float, spec.name) ? content.float[spec.name] : undefined);
    if (!values) return fail(res, 404, 'layer', `frame ${f.id} has no ${layer} map`);
    const f32 = Float32Array.from(values);
    // The frame's world coordinates (heliographic or celestial), when its headers had them: the page
    // draws degree axes from them (core/frameAssembly/wcs.ts pixelToWorld).
    const head = spec.from === 'frame' ? content.header : await readFrameBlobHeader(join(store.dataDir, f.file), f.file);
    const keywords = (head.provenance as Frame['provenance'] | undefined)?.keywords;
    const wcs = keywords ? frameWcs(keywords, f.nx, f.ny) ?? null : null;
    res.json({
      frame_id: f.id, time: iso(f.time), layer, unit: spec.unit, nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy,
      encoding: 'float32-base64', data: Buffer.from(f32.buffer).toString('base64'), wcs,
    });
  });

  r.get('/frames/:id/maps.fits', async (req, res) => {
    const f = frameOf(req, res);
    if (!f) return;
    const frame = decodeFrameBlob(await readFile(join(store.dataDir, f.file)), f.file);
    const maps = f.mapsFile ? decodeFrameBlob(await readFile(join(store.dataDir, f.mapsFile)), f.mapsFile) : undefined;
    // The same images as the batch's --maps files (replay/mapImages.ts), with bn first.
    // With the stored frame's provenance, the input's world coordinates are kept.
    const g = { ...f, provenance: (frame.header.provenance ?? {}) as Frame['provenance'] };
    const images: ImageToWrite[] = [gridImage(g, 'BN', frame.float.bn, 'G')];
    if (maps?.float.gtheta) images.push(gridImage(g, 'GTHETA', maps.float.gtheta, 'Mx2 cm-2 s-1'));
    if (maps?.int.labels) images.push(gridImage(g, 'LABELS', maps.int.labels, ''));
    if (maps?.float.vx && maps.float.vy) images.push(gridImage(g, 'VX', maps.float.vx, 'km/s'), gridImage(g, 'VY', maps.float.vy, 'km/s'));
    const bytes = writeFits({ primary: [{ key: 'ORIGIN', value: 'helicord' }, { key: 'REGION', value: f.region }, { key: 'FRAMEID', value: f.id }], images });
    res.type('application/fits').set('content-disposition', `attachment; filename="${f.region}-${f.id}.fits"`).send(Buffer.from(bytes));
  });

  return r;
}

export function buildApp(ctx: ApiContext): express.Express {
  const { store, pipeline, token } = ctx;
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', false);
  const h = apiHelpers(ctx);

  const canRead = (req: Request) => (!ctx.readToken && isLoopback(req.socket.remoteAddress)) || tokenMatches(token, req.get('authorization'));

  // Only requests addressed to this monitor by a loopback name (or one the operator allowed):
  // a page on another site that points its name at 127.0.0.1 gets nothing (DNS rebinding).
  app.use((req, res, next) => {
    if (!hostAllowed(ctx.hosts, req.get('host'))) return fail(res, 403, 'host', `this monitor does not answer to the host name "${String(req.get('host') ?? '').slice(0, 80)}" (loopback names, or those given with --allow-host)`, 'host not allowed');
    // A browser page of another origin may not change anything (reads are guarded by the
    // browser's same-origin rule and by Host above).
    if (req.method !== 'GET' && req.method !== 'HEAD' && !originAllowed(ctx.hosts, req.get('origin'))) {
      return fail(res, 403, 'origin', `requests from a page at "${String(req.get('origin')).slice(0, 80)}" are not accepted`, 'origin not allowed');
    }
    next();
  });

  // Open to every caller, also with --read-token: a supervisor probes it without the token. It
  // names no region and carries no data, only the monitor's own state.
  app.get('/api/health', (_req, res) => {
    res.json({
      ok: true, uptime_s: (Date.now() - ctx.startedAt) / 1000, regions: store.regions().length, queue: pipeline.queueLength(),
      queue_peak: pipeline.queuePeak, queue_limit: pipeline.queueLimit,
      disk: pipeline.diskState(), unauthorized: pipeline.unauthorizedCount(),
      ...(ctx.loopDelay && { loop_delay_ms: ctx.loopDelay() }),
      ...(ctx.warmingUp && { warming_up: ctx.warmingUp() }),
    });
  });

  // Reading (GET, and HEAD, which express answers with the GET route): open on loopback unless protected.
  app.use('/api', (req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') return next();
    if (canRead(req)) return next();
    fail(res, 401, 'authorization', 'reading needs "Authorization: Bearer <token>" here', 'token needed');
  });

  app.get('/api/regions', (_req, res) => {
    res.json({
      regions: store.regions().map((r) => ({
        name: r.name, created: iso(r.created), settings: r.settings, frames: store.frameCount(r.name),
        duplicates: r.duplicates, last_frame_time: iso(store.latestTime(r.name)),
        last_sample_time: iso(store.lastSampleTime(r.name)), replay: ctx.replayStatus(r.name) ?? null,
      })),
    });
  });

  app.use('/api/regions/:region', ingestRoutes(ctx, h), manageRoutes(ctx, h), seriesRoutes(ctx, h), frameRoutes(ctx, h));

  app.use('/api', (_req, res) => fail(res, 404, '(path)', 'no such route (see docs/api.md)'));
  if (ctx.page) app.use('/', ctx.page);

  // Errors from the body parsers: size (413) and bad JSON (400) get our error shape, and frame
  // ingest refusals are recorded.
  app.use((err: unknown, req: Request, res: Response, _next: NextFunction) => {
    const e = err as { type?: string; status?: number; message?: string; limit?: number; length?: number };
    const m = /^\/api\/regions\/([A-Za-z0-9_-]{1,64})\/frames\/?$/.exec(req.path);
    const region = m?.[1];
    const isIngest = req.method === 'POST' && m !== null;
    if (e.type === 'entity.too.large') {
      const reason = `the body is larger than the limit of ${ctx.bodyLimit} bytes`;
      // refuse() never rejects: the answer goes out whether or not the record could be written.
      if (isIngest && region) return void pipeline.refuse(region, 413, 'http', '(body)', reason).then(() => fail(res, 413, '(body)', reason, 'too large'));
      return fail(res, 413, '(body)', reason, 'too large');
    }
    // The parser's message quotes the body: give the position only.
    if (e.type === 'entity.parse.failed') return fail(res, 400, '(body)', `is not valid JSON${/position \d+/.exec(e.message ?? '') ? ` (at ${/position \d+/.exec(e.message ?? '')![0]})` : ''}`);
    if (err instanceof InputError) return inputFail(res, 400, err);
    if (e.status && e.status >= 400 && e.status < 500) return fail(res, e.status, '(request)', e.message ?? 'bad request');
    if (isDiskFull(err)) {
      res.set('Retry-After', '30');
      return fail(res, 507, '(disk)', 'the monitor\'s disk is full: nothing was changed; try again later', 'disk full');
    }
    fail(res, 500, '(server)', String(e.message ?? err), 'internal error');
  });

  return app;
}
