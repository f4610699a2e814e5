// Starts the monitor: store, worker pool, pipeline, HTTP and WebSocket endpoints, watched
// folders and (with demo) the demo region; resumes every region where it stopped.
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { mkdirSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { resolve } from 'node:path';
import { BUDGET_DEFAULTS } from '../core/budget.js';
import { pageRouter } from './staticPage.js';
import { loadOrCreateToken } from './auth.js';
import { ComputePool } from './computePool.js';
import { DEMO_REGION } from './regionReplay.js';
import type { ReplayStart } from './replayRegistry.js';
import { ReplayRegistry } from './replayRegistry.js';
import { FolderWatch } from './folderWatch.js';
import { hostPolicy } from './hostCheck.js';
import { DEFAULT_INTAKE_MEMORY_MB, DEFAULT_MAX_FRAME_PIXELS, IntakePool } from './intakePool.js';
import { BraidViews } from './braidViews.js';
import { buildApp } from './httpApi.js';
import { gapsForWire } from '../core/wire/gapWire.js';
import { snapshotMessage } from '../core/wire/viewerMessages.js';
import { DEFAULT_QUEUE_LIMIT, Pipeline } from './pipeline.js';
import { RegionAdmin } from './regionAdmin.js';
import { finishLeftChores } from './regionFiles.js';
import { Store } from './store.js';
import { StoreWriter } from './storeWriter.js';
import { ViewerHub } from './viewerHub.js';
import { postWebhook } from './webhook.js';
import { attachWebSockets } from './wsEndpoints.js';

export interface ServeOptions {
  /** Data folder: database, frame and map files, token, inbox folders. */
  readonly dataDir: string;
  /** TCP port; 0 picks a free one (the url tells which). */
  readonly port: number;
  /** Interface to listen on. Default 127.0.0.1 (loopback only). */
  readonly host?: string;
  /** Add the built-in demo region, streaming live. */
  readonly demo?: boolean;
  /** Reading needs the token too (otherwise open on loopback). */
  readonly readToken?: boolean;
  readonly log?: (line: string) => void;
  /** Largest request body / WebSocket message, bytes. Default 256 MiB. */
  readonly bodyLimit?: number;
  /** Compute workers. Default: one fewer than the cores, at least 1, at most 4. */
  readonly workers?: number;
  /**
   * Each compute worker hands the independent parts of a frame to a second thread (server/
   * frameAssistant.ts). Default: on with two cores or more.
   */
  readonly assistFrames?: boolean;
  /**
   * Each compute worker analyses a short synthetic sequence at start, so that the first frames of
   * a campaign are analysed by optimised code (server/analysisWarmUp.ts); it stops when a frame
   * comes. Default off here; the command line turns it on (`--cold-start` leaves it off).
   */
  readonly warmUp?: boolean;
  /** Demo frame interval at speed 1, ms. Default 2000. */
  readonly demoIntervalMs?: number;
  /** Replays to start once listening (`helicord replay`; server/replayRegistry.ts). */
  readonly replays?: readonly ReplayStart[];
  /** Folder under which the API may start folder replays; without it only stored regions. */
  readonly replayRoot?: string;
  /** Host names answered besides the loopback ones (Host header, browser Origin). */
  readonly allowedHosts?: readonly string[];
  /** Frames a region may have waiting before senders are held back (503 / paused socket). Default 16. */
  readonly queueLimit?: number;
  /** Largest frame accepted, in pixels (nx * ny), checked before decompressing or allocating. Default 2048^2. */
  readonly maxFramePixels?: number;
  /** Memory bound of the intake worker's JavaScript heap, MiB. Default 1024. */
  readonly intakeMemoryMb?: number;
  /** Viewer sockets open at once. Default 1000. */
  readonly maxViewers?: number;
}

export interface RunningMonitor {
  readonly url: string;
  /** The monitor's replays (the demo's, the command line's, the API's). */
  readonly replays: ReplayRegistry;
  close(): Promise<void>;
}

/** Default body limit: a 2048^2 JSON frame with bn, vx, vy is about 120 MB. */
export const DEFAULT_BODY_LIMIT = 256 * 1024 * 1024;

/** The event loop's delay over a window of 5 to 10 s (perf_hooks histogram, swapped every 5 s). */
function loopDelayWatch(): { read(): { max: number; p99: number }; stop(): void } {
  let current = monitorEventLoopDelay({ resolution: 10 });
  let previous = current;
  current.enable();
  const swap = setInterval(() => {
    previous.disable();
    previous = current;
    current = monitorEventLoopDelay({ resolution: 10 });
    current.enable();
  }, 5000);
  swap.unref();
  const ms = (ns: number) => (Number.isFinite(ns) ? Math.round(ns / 1e4) / 100 : 0);
  return {
    read: () => ({ max: ms(Math.max(previous.max, current.max)), p99: ms(Math.max(previous.percentile(99), current.percentile(99))) }),
    stop: () => { clearInterval(swap); previous.disable(); current.disable(); },
  };
}

/** dist/web beside the compiled server (dist/server), or from the sources ../dist/web. */
function dashboardDir(): string {
  const compiled = existsSync(fileURLToPath(new URL('./serve.js', import.meta.url)));
  return fileURLToPath(new URL(compiled ? '../web/' : '../dist/web/', import.meta.url));
}

export async function serve(options: ServeOptions): Promise<RunningMonitor> {
  const log = options.log ?? ((line: string) => process.stdout.write(line + '\n'));
  const dataDir = resolve(options.dataDir);
  mkdirSync(dataDir, { recursive: true, mode: 0o700 });
  const token = loadOrCreateToken(dataDir, log);
  // Reads on the event loop; every write (and its fsync) in the writer thread.
  const store = new Store(dataDir);
  const writer = new StoreWriter(dataDir, log);
  const workers = options.workers ?? Math.min(4, Math.max(1, availableParallelism() - 1));
  const pool = new ComputePool(workers, log, options.assistFrames ?? availableParallelism() >= 2, options.warmUp ?? false);
  const maxFramePixels = options.maxFramePixels ?? DEFAULT_MAX_FRAME_PIXELS;
  const bodyLimit = options.bodyLimit ?? DEFAULT_BODY_LIMIT;
  // A watched file is held to the body limit too (it is not read when larger).
  const intake = new IntakePool(log, { maxFramePixels, memoryMb: options.intakeMemoryMb ?? DEFAULT_INTAKE_MEMORY_MB, maxFileBytes: bodyLimit });
  const readToken = options.readToken ?? false;
  // Set once the pipeline exists (below); read only after that.
  let replays: ReplayRegistry | undefined;
  const replayStatus = (region: string) => replays?.status(region) ?? null;

  const loop = loopDelayWatch();
  let pipeline: Pipeline;
  const snapshot = (region: string) => {
    const latest = store.latestTime(region);
    const frames = latest === undefined ? [] : store.framesInRange(region, latest, latest);
    return snapshotMessage(region, {
      samples: store.lastSamples(region, 2000),
      gaps: gapsForWire(pipeline.accumulation(region).budget.gaps),
      alerts: store.region(region) ? pipeline.alerts(region) : [],
      status: pipeline.status(region),
      latest_frame: frames.length ? { frame_id: frames[0].id, time: new Date(frames[0].time).toISOString() } : null,
      // The region's gap rule (its budget gapFactor), so the page breaks its lines where the budget sees a gap.
      gap_factor: store.region(region)?.settings.budget.gapFactor ?? BUDGET_DEFAULTS.gapFactor,
    });
  };
  const hub = new ViewerHub(snapshot, 4 * 1024 * 1024, log, options.maxViewers ?? 1000);
  pipeline = new Pipeline(store, writer, pool, intake, hub, {
    log,
    replayStatus,
    queueLimit: options.queueLimit ?? DEFAULT_QUEUE_LIMIT,
    onAlert: (region, alert, change, settings) => {
      if (settings.webhookUrl && (change.to === 'raised' || change.to === 'settled')) void postWebhook(settings.webhookUrl, region, alert, change, log);
    },
  });
  const folders = new FolderWatch(store, writer, pipeline, intake, log);
  const feeds = new ReplayRegistry({
    store, writer, pipeline, log,
    ...(options.replayRoot !== undefined && { replayRoot: options.replayRoot }),
    onSettings: (region) => folders.sync(region, store.region(region)?.settings.watchFolder ?? false),
    onChange: (region) => { if (store.region(region)) hub.send(region, { type: 'status', status: pipeline.status(region) }); },
  });
  replays = feeds;
  const regions = new RegionAdmin({ store, writer, pipeline, folders, feeds, hub, log });

  const host = options.host ?? '127.0.0.1';
  const hosts = hostPolicy(options.allowedHosts, host);
  const app = buildApp({
    store, writer, pipeline, token, readToken, bodyLimit, startedAt: Date.now(), loopDelay: () => loop.read(), warmingUp: () => pool.warmingUp, hosts,
    braids: new BraidViews(store),
    onSettings: (region) => folders.sync(region, store.region(region)?.settings.watchFolder ?? false),
    replay: (region, action) => feeds.control(region, action),
    regions,
    replayStatus,
    page: pageRouter(dashboardDir()),
  });
  const server = createServer(app);
  server.requestTimeout = 0; // large frames on slow links; the body limit bounds them
  const sockets = attachWebSockets(server, { store, pipeline, hub, token, readToken, bodyLimit, snapshot, hosts, log });
  try {
    await new Promise<void>((ok, fail) => {
      server.once('error', fail);
      server.listen(options.port, host, () => { server.off('error', fail); ok(); });
    });
  } catch (e) {
    // Port taken or not allowed: give the threads and the database back before reporting it.
    loop.stop();
    await Promise.all([pool.close(), intake.close(), writer.close()]);
    store.close();
    throw new Error(`cannot listen on ${host}:${options.port}: ${(e as Error).message}`);
  }
  const port = (server.address() as AddressInfo).port;
  const url = `http://${host.includes(':') ? `[${host}]` : host}:${port}`;

  // The last line of defence: an error nobody handled is logged and the monitor keeps running
  // (every path is meant to handle its own; a line here is a defect to fix).
  const onUnhandled = (e: unknown) => log(`internal error, unhandled (the monitor keeps running): ${(e as Error)?.stack ?? e}`);
  process.on('unhandledRejection', onUnhandled);
  process.on('uncaughtException', onUnhandled);

  // The file work of a region removal, rename or reset that a crash interrupted, before anything runs.
  await finishLeftChores(store, writer, log);
  pipeline.resumeAll();
  for (const r of store.regions()) folders.sync(r.name, r.settings.watchFolder);
  // New folders under the inbox become regions.
  folders.watchInbox();
  // Regions created later (by ingest, by a rename, again after a removal) get their folder
  // watched within a second.
  const regionPoll = setInterval(() => {
    for (const r of store.regions()) folders.sync(r.name, r.settings.watchFolder);
  }, 1000);
  regionPoll.unref();
  if (options.demo) feeds.startDemo(DEMO_REGION, options.demoIntervalMs ?? 2000);
  log(`helicord monitor listening at ${url} (data in ${dataDir})`);

  let closing: Promise<void> | undefined;
  const close = () => {
    closing ??= (async () => {
      await feeds.close();
      loop.stop();
      clearInterval(regionPoll);
      await folders.close();
      hub.closeAll();
      for (const s of sockets) s.close();
      server.closeAllConnections();
      await new Promise<void>((ok) => server.close(() => ok()));
      await pipeline.close();
      await pool.close();
      await intake.close();
      await writer.close();
      store.close();
      process.off('unhandledRejection', onUnhandled);
      process.off('uncaughtException', onUnhandled);
    })();
    return closing;
  };
  try {
    for (const r of options.replays ?? []) await feeds.start(r);
  } catch (e) {
    await close();
    throw e;
  }
  return { url, replays: feeds, close };
}
