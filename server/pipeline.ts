// The monitor's pipeline as an rxjs graph. Arrivals from every source (HTTP, WebSocket, watched
// folder, demo) merge into one stream; per region they are
//   validate -> order and store (duplicates, shape, lateness; the sender's answer) ->
//   pair (with the last processed frame) -> compute in a worker -> accumulate (budget, rules and
//   series row: core/accumulate.ts, the step the batch takes too) -> store -> broadcast.
// The store stage answers the sender only after the frame is on disk and committed. Processing
// always takes the stored, not-yet-processed frames of a region in time order; a frame that
// arrives after later ones (within the lateness) rewinds the region to the frame before it and
// the later frames are processed again, so the stored result is always that of the in-order run.
// A restart just asks every region to process what is pending.
// A full disk is waited out: the sender is told to come back later (507), a frame whose analysis
// could not be written stays pending and is tried again when space returns, nothing is marked
// failed for it. Nothing here may end the process: failures are answered, logged and retried.
import { rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { Observable } from 'rxjs';
import { Subject, concatMap, defer, from, groupBy, map, mergeMap, of, tap, catchError, EMPTY } from 'rxjs';
import { restoreSpanS } from '../core/analysisMemory.js';
import { accumulate, accumulateRefusal, seriesCadenceS } from '../core/accumulate.js';
import type { Frame } from '../core/frame.js';
import type { AnalysisSettings } from '../core/frameAnalysis.js';
import { sameGrid } from '../core/grid.js';
import { InputError } from '../core/inputError.js';
import type { RateSample } from '../core/rateSample.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import type { AlertChange, AlertRecord } from '../core/alerts/alertState.js';
import { acknowledgeAlert, newAlertMachine } from '../core/alerts/alertState.js';
import type { RulesState } from '../core/alerts/evaluateRules.js';
import { alertRecords } from '../core/alerts/evaluateRules.js';
import { RULES, ruleParams } from '../core/alerts/ruleCatalogue.js';
import { writeFileAtomic } from './atomicFile.js';
import { DiskFullError, isDiskFull } from './diskFull.js';
import type { ComputePool } from './computePool.js';
import type { WorkerReply } from './computeMessages.js';
import type { Intake } from './frameIntake.js';
import { frameFromInput, intakeFrame, intakeStatus } from './frameIntake.js';
import type { IntakePool } from './intakePool.js';
import { IntakeRefusal } from './intakePool.js';
import type { RegionSettings } from './regionSettings.js';
import { DEFAULT_SETTINGS } from './regionSettings.js';
import type { Carry, FrameRow, Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';
import { emptyCarry } from './store.js';

export type Payload =
  | { readonly kind: 'json'; readonly bytes: Uint8Array }
  | { readonly kind: 'fits'; readonly bytes: Uint8Array }
  | { readonly kind: 'frame'; readonly frame: Frame }
  /** A frame file in a watched folder (read by loadFrameFile in the intake worker). */
  | { readonly kind: 'file'; readonly path: string }
  | { readonly kind: 'error'; readonly error: InputError; readonly status: number };

export interface Arrival {
  readonly region: string;
  readonly payload: Payload;
  /** Where it came from, for the record: 'http', 'ws', a file name, 'demo'. */
  readonly source: string;
  /** The sender may create the region (holds the token). */
  readonly mayCreate: boolean;
  /** Already counted in the region's queue by `admit` (an HTTP request admitted before its body was read). */
  readonly admitted?: boolean;
}

export type IngestAnswer =
  | { readonly status: 201; readonly body: { status: 'stored'; frame_id: number; time: string } }
  | { readonly status: 200; readonly body: { status: 'duplicate'; frame_id: number; time: string } }
  | { readonly status: number; readonly body: { error: string; field: string; problem: string }; readonly retryAfterS?: number };

export interface Broadcaster {
  send(region: string, message: unknown): void;
  /** Sends every viewer of the region a fresh snapshot (after frames were put back in order). */
  resync(region: string): void;
}

export interface PipelineOptions {
  readonly log?: (line: string) => void;
  /** Called for every alert change (the webhook lives here). */
  readonly onAlert?: (region: string, alert: AlertRecord, change: AlertChange, settings: RegionSettings) => void;
  /** Called after every processed frame (tests and the benchmark listen). */
  readonly onProcessed?: (region: string, frameId: number) => void;
  /** The replay state of a region (the demo feed), null for live regions. */
  readonly replayStatus?: (region: string) => unknown;
  /** Frames a region may have waiting (arriving or stored, not yet processed) before senders are held back. Default 16. */
  readonly queueLimit?: number;
}

/** Default bound of a region's queue: frames arriving or stored and not yet processed. */
export const DEFAULT_QUEUE_LIMIT = 16;

/** Pause before a region blocked by a full disk tries again (doubling up to the last). */
const DISK_RETRY_MS = [1000, 2000, 5000, 10_000, 30_000];

interface Validated {
  readonly arrival: Arrival;
  /** Not a frame: an operation run in the region's arrival turn (see `arrivalTurn`). */
  readonly turn?: () => Promise<void>;
  readonly intake?: Intake;
  readonly refusal?: { status: number; error: InputError; frameTime?: number };
  readonly resolve: (a: IngestAnswer) => void;
}

interface Analysed {
  readonly frame: FrameRow;
  readonly reply: WorkerReply;
  sample?: RateSample;
  row?: SeriesRow;
  carry: Carry;
  changes: { alert: AlertRecord; change: AlertChange }[];
  failure?: { field: string; problem: string };
}

const isoOrNull = (t: number | undefined) => (t === undefined ? null : new Date(t).toISOString());

export class Pipeline {
  private readonly arrivals$ = new Subject<{ arrival: Arrival; resolve: (a: IngestAnswer) => void; turn?: () => Promise<void> }>();
  private readonly work$ = new Subject<string>();
  private readonly carries = new Map<string, Carry>();
  private readonly log: (line: string) => void;
  private inFlight = 0;
  /** Arrivals not yet answered, per region. */
  private readonly arriving = new Map<string, number>();
  /** Callers waiting for room in a region's queue. */
  private readonly roomWaiters = new Map<string, (() => void)[]>();
  /** Mean processing time of a frame, ms (exponential average), for Retry-After. */
  private frameMs = 1000;
  /** Set while writes fail for lack of space: since when, and what failed last. */
  private diskFull: { since: number; what: string } | undefined;
  private readonly diskRetries = new Map<string, { timer: ReturnType<typeof setTimeout>; attempt: number }>();
  private readonly lastDiskAttempt = new Map<string, number>();
  /** Regions to process again from a frame on (frames once failed for lack of space). */
  private readonly redoFrom = new Map<string, number>();
  /** Operations waiting for the region's processing turn (see `processingTurn`). */
  private readonly turns = new Map<string, (() => Promise<void>)[]>();
  /** The region operations (remove, rename, reset), one after the other. */
  private exclusiveChain: Promise<unknown> = Promise.resolve();
  /** Frame removals waiting for the region's processing turn. */
  private readonly removals = new Map<string, { id: number; resolve: (r: { frame_id: number; time: string; recomputed: number }) => void; reject: (e: Error) => void }[]>();
  /** Requests without a valid token: counted here, never stored (they change nothing). */
  private unauthorized = { total: 0, sinceLog: 0, lastLog: 0, latest: '' };
  /** Log lines about failed writes, at most one per minute per kind. */
  private readonly quietUntil = new Map<string, number>();
  readonly queueLimit: number;
  /** The longest a region's queue has been since start (the health answer reports it). */
  queuePeak = 0;
  private closed = false;
  private idleWaiters: (() => void)[] = [];
  private activeWork = 0;

  constructor(
    private readonly store: Store,
    private readonly writer: StoreWriter,
    private readonly pool: ComputePool,
    private readonly intake: IntakePool,
    private readonly hub: Broadcaster,
    private readonly options: PipelineOptions = {},
  ) {
    this.log = options.log ?? (() => undefined);
    this.queueLimit = options.queueLimit ?? DEFAULT_QUEUE_LIMIT;
    this.arrivals$.pipe(
      groupBy((a) => a.arrival.region),
      mergeMap((group$) => group$.pipe(
        // validate: parse, check, hash and encode (in the intake worker)
        concatMap((a) => (a.turn ? of<Validated>(a) : from(this.validate(a.arrival, a.resolve)))),
        // order and store: duplicates, shape, lateness; durable write; the sender's answer
        concatMap((v) => from(v.turn ? v.turn() : this.orderAndStore(v))),
      )),
    ).subscribe();
    this.work$.pipe(
      groupBy((region) => region),
      mergeMap((group$) => group$.pipe(concatMap((region) => this.processPending$(region)))),
    ).subscribe();
  }

  // Sources ---------------------------------------------------------------------------------

  /** Submits a frame; resolves with the answer once it is stored (or refused). */
  ingest(arrival: Arrival): Promise<IngestAnswer> {
    if (this.closed) {
      return Promise.resolve({ status: 503, body: { error: 'the monitor is shutting down', field: '(server)', problem: 'try again after restart' } });
    }
    this.inFlight++;
    const region = arrival.region;
    if (!arrival.admitted) this.count(region, +1);
    this.notePeak(region);
    return new Promise<IngestAnswer>((resolve) => {
      this.arrivals$.next({
        arrival,
        resolve: (a) => {
          this.inFlight--;
          if (!arrival.admitted) this.count(region, -1);
          resolve(a);
          this.wakeRoomWaiters(region);
        },
      });
    });
  }

  private count(region: string, d: number): void {
    const n = (this.arriving.get(region) ?? 0) + d;
    if (n > 0) this.arriving.set(region, n); else this.arriving.delete(region);
  }

  private notePeak(region: string): void {
    const q = this.regionQueue(region);
    if (q > this.queuePeak) this.queuePeak = q;
  }

  /**
   * Admits a sender to the region's queue before its frame is read (HTTP: before the body), or
   * answers false when the queue is at its bound. An admitted sender holds its place until
   * `release` (called once, when its request ends); its frame goes to `ingest` with `admitted`.
   */
  admit(region: string): boolean {
    if (this.closed || this.queueFull(region)) return false;
    this.count(region, +1);
    this.notePeak(region);
    return true;
  }

  release(region: string): void {
    this.count(region, -1);
    this.wakeRoomWaiters(region);
  }

  /**
   * Records a refusal decided outside the pipeline (body size, content type) from a sender that
   * holds the token. Never rejects: when the refusal cannot be written (a full disk) the answer
   * is the same and the failure is logged.
   */
  async refuse(region: string, status: number, source: string, field: string, reason: string): Promise<IngestAnswer> {
    await this.recordRefusal(region, { status, source, field, reason });
    return { status, body: { error: reason, field, problem: reason } };
  }

  /**
   * A request without a valid token: it changes nothing stored (no refusal row, no alert, no
   * webhook), whatever region it names. Counted in memory; logged at most once a minute.
   */
  noteUnauthorized(what: string, now = Date.now()): void {
    const u = this.unauthorized;
    u.total++;
    u.sinceLog++;
    u.latest = what.slice(0, 200);
    if (now - u.lastLog >= 60_000) {
      this.log(`${u.sinceLog} request(s) without a valid token since the last note (${u.total} since start; latest: ${u.latest})`);
      u.lastLog = now;
      u.sinceLog = 0;
    }
  }

  /** Requests without a valid token since start (the health answer reports it). */
  unauthorizedCount(): number {
    return this.unauthorized.total;
  }

  /** The disk state: null when writes succeed, else since when they fail for lack of space. */
  diskState(): { full: boolean; since: string | null; what: string | null } {
    const d = this.diskFull;
    return { full: d !== undefined, since: d ? new Date(d.since).toISOString() : null, what: d?.what ?? null };
  }

  private noteDiskFull(what: string, e: unknown): void {
    if (!this.diskFull) this.diskFull = { since: Date.now(), what };
    else this.diskFull.what = what;
    this.quietLog('disk', `the disk is full: ${what} waits for space (${String((e as Error)?.message ?? e).split('\n')[0]})`);
  }

  private noteWriteOk(): void {
    if (this.diskFull) {
      this.log(`disk space is back (full since ${new Date(this.diskFull.since).toISOString()})`);
      this.diskFull = undefined;
    }
  }

  /** Logs a line of this kind at most once a minute. */
  private quietLog(kind: string, line: string): void {
    const now = Date.now();
    if ((this.quietUntil.get(kind) ?? 0) > now) return;
    this.quietUntil.set(kind, now + 60_000);
    this.log(line);
  }

  /** A region's queue: frames arriving (not yet answered) plus frames stored and not yet processed. */
  regionQueue(region: string): number {
    return (this.arriving.get(region) ?? 0) + this.store.unprocessedCount(region);
  }

  /** True when the region's queue is at its bound: senders are held back (503, a paused socket). */
  queueFull(region: string): boolean {
    return this.regionQueue(region) >= this.queueLimit;
  }

  /** Seconds a held-back sender should wait: about the time to work one frame off the queue. */
  retryAfterS(): number {
    return Math.min(120, Math.max(1, Math.ceil(this.frameMs / 1000)));
  }

  /** Resolves once the region's queue is below its bound (or the pipeline closes, or `stop()` says so). */
  async waitForRoom(region: string, stop: () => boolean = () => false): Promise<void> {
    while (!this.closed && !stop() && this.queueFull(region)) {
      await new Promise<void>((r) => {
        const list = this.roomWaiters.get(region) ?? [];
        list.push(r);
        this.roomWaiters.set(region, list);
        // A deadline as well, in case room is made without a wake-up (a frame removed).
        setTimeout(r, 1000).unref();
      });
    }
  }

  private wakeRoomWaiters(region: string): void {
    const list = this.roomWaiters.get(region);
    if (!list || this.queueFull(region)) return;
    this.roomWaiters.delete(region);
    for (const w of list) w();
  }

  // Region operations -----------------------------------------------------------------------

  /**
   * Runs `fn` in the region's turn at the order-and-store stage: no frame of the region is being
   * stored while it runs, and arrivals after it wait for it.
   */
  arrivalTurn<T>(region: string, fn: () => Promise<T>): Promise<T> {
    return new Promise<T>((resolve, reject) => {
      this.arrivals$.next({
        arrival: { region, payload: { kind: 'error', status: 500, error: new InputError('(turn)', '(turn)', 'not a frame') }, source: '(turn)', mayCreate: false },
        resolve: () => undefined,
        turn: () => fn().then(resolve, reject),
      });
    });
  }

  /**
   * Runs `fn` in the region's processing turn: no frame of the region is being computed or
   * committed while it runs (the frame under way is finished first; the others stay pending).
   */
  processingTurn<T>(region: string, fn: () => Promise<T>): Promise<T> {
    return new Promise<T>((resolve, reject) => {
      const list = this.turns.get(region) ?? [];
      list.push(() => fn().then(resolve, reject));
      this.turns.set(region, list);
      this.work$.next(region);
    });
  }

  private async runTurns(region: string): Promise<void> {
    for (let list = this.turns.get(region); list; list = this.turns.get(region)) {
      this.turns.delete(region);
      for (const turn of list) await turn();
    }
  }

  /**
   * Runs `fn` while the regions are still: each one's arrival and processing turns are held
   * (nothing of theirs is stored or computed meanwhile; what arrives waits). One such operation
   * at a time, monitor-wide, so two cannot hold each other's regions.
   */
  exclusive<T>(regions: readonly string[], fn: () => Promise<T>): Promise<T> {
    const run = async (): Promise<T> => {
      let release!: () => void;
      const released = new Promise<void>((r) => { release = r; });
      const held: Promise<void>[] = [];
      for (const region of new Set(regions)) {
        for (const turn of [(f: () => Promise<void>) => this.arrivalTurn(region, f), (f: () => Promise<void>) => this.processingTurn(region, f)]) {
          held.push(new Promise<void>((reached, failed) => { turn(async () => { reached(); await released; }).catch(failed); }));
        }
      }
      try {
        await Promise.all(held);
        return await fn();
      } finally {
        release();
      }
    };
    const p = this.exclusiveChain.then(run, run);
    this.exclusiveChain = p.catch(() => undefined);
    return p;
  }

  /**
   * Creates a region for a folder that appeared under the inbox, in the region's arrival turn
   * (after an operation on that name under way); `stillWanted` is asked there. True when made.
   */
  createRegionFor(name: string, stillWanted: () => Promise<boolean>): Promise<boolean> {
    return this.arrivalTurn(name, async () => {
      if (this.store.region(name) || !(await stillWanted())) return false;
      await this.writer.call('createRegion', name);
      return true;
    });
  }

  /** Forgets what the pipeline holds of a region that was removed (call while it is still). */
  regionRemoved(name: string): void {
    this.forgetState(name);
    this.removals.get(name)?.forEach((r) => r.reject(new InputError(name, 'region', `region ${name} was removed`)));
    this.removals.delete(name);
  }

  /** Moves what the pipeline holds of a region to its new name (call while both are still). */
  regionRenamed(from: string, to: string): void {
    this.forgetState(from);
    this.forgetState(to);
    const removals = this.removals.get(from);
    if (removals) { this.removals.delete(from); this.removals.set(to, removals); }
    // Its frames still to be computed go on under the new name.
    this.work$.next(to);
  }

  /** The state a region starts from after a reset: empty, but for the refusals rule and acknowledgements. */
  resetCarry(name: string): Carry {
    return this.restoredCarry(name, undefined);
  }

  /** After a reset (call while the region is still): its state is `carry`, viewers get the empty snapshot. */
  regionReset(name: string, carry: Carry): void {
    this.forgetState(name);
    this.setCarry(name, carry);
    this.hub.resync(name);
  }

  private forgetState(name: string): void {
    this.carries.delete(name);
    this.redoFrom.delete(name);
    this.lastDiskAttempt.delete(name);
    const retry = this.diskRetries.get(name);
    if (retry) { clearTimeout(retry.timer); this.diskRetries.delete(name); }
    this.pool.forget(name);
  }

  /** Asks every region to process what is stored and pending (at start). */
  resumeAll(): void {
    for (const r of this.store.regions()) {
      // Frames an earlier run marked failed because their results could not be written for lack
      // of space were never at fault: they are processed again, from the earliest of them on.
      const f = this.store.firstDiskFailure(r.name);
      if (f) this.redoFrom.set(r.name, f.time);
      this.work$.next(r.name);
    }
  }

  /** Frames arriving or waiting to be processed, all regions (plus regions about to be rewound). */
  queueLength(): number {
    let removals = 0;
    for (const list of this.removals.values()) removals += list.length;
    return this.inFlight + this.store.pendingCount() + this.redoFrom.size + removals;
  }

  /** Resolves when nothing is pending (tests, benchmark, shutdown). */
  async idle(): Promise<void> {
    while (this.inFlight > 0 || this.activeWork > 0 || this.store.pendingCount() > 0) {
      await new Promise<void>((r) => { this.idleWaiters.push(r); setTimeout(r, 50); });
    }
  }

  /** Stops taking new frames; resolves when the frame being processed is committed. */
  async close(): Promise<void> {
    this.closed = true;
    for (const r of this.diskRetries.values()) clearTimeout(r.timer);
    this.diskRetries.clear();
    for (const list of this.roomWaiters.values()) for (const w of list) w();
    this.roomWaiters.clear();
    while (this.activeWork > 0 || this.inFlight > 0) await new Promise((r) => setTimeout(r, 20));
  }

  // Region state ----------------------------------------------------------------------------

  carry(region: string): Carry {
    let c = this.carries.get(region);
    if (!c) { c = this.store.regionCarry(region); this.carries.set(region, c); }
    return c;
  }

  private setCarry(region: string, c: Carry): void {
    this.carries.set(region, c);
  }

  /** Every enabled rule's alert (quiet ones included), in catalogue order. */
  alerts(region: string): AlertRecord[] {
    const settings = this.store.region(region)?.settings;
    const rules = this.carry(region).rules;
    const have = new Map(alertRecords(rules).map((a) => [a.id, a]));
    const out: AlertRecord[] = [];
    for (const def of RULES) {
      const p = ruleParams(def, settings?.rules);
      const a = have.get(def.id);
      if (a) out.push(a);
      else if (p.enabled) out.push(newAlertMachine(def.id, def.id, p.threshold, def.unit, def.source, this.store.region(region)?.created ?? Date.now()).record);
    }
    return out;
  }

  async acknowledge(region: string, id: string, now = Date.now()): Promise<AlertRecord | undefined> {
    const c = this.carry(region);
    const m = c.rules.machines[id];
    if (!m) return undefined;
    const rules: RulesState = { ...c.rules, machines: { ...c.rules.machines, [id]: acknowledgeAlert(m, now) } };
    const next = { ...c, rules };
    try {
      await this.writer.call('setRegionCarry', region, next);
    } catch (e) {
      if (isDiskFull(e)) this.noteDiskFull('an acknowledgement', e);
      throw e;
    }
    this.setCarry(region, next);
    const alert = rules.machines[id].record;
    this.hub.send(region, { type: 'alert', alert });
    return alert;
  }

  status(region: string): Record<string, unknown> {
    const c = this.carry(region);
    return {
      last_frame_time: isoOrNull(this.store.latestTime(region)),
      cadence_s: seriesCadenceS(c.budget.intervals) ?? null,
      refusals: this.store.refusalCount(region),
      gaps: c.budget.gaps.length,
      queue: this.regionQueue(region),
      queue_limit: this.queueLimit,
      disk_full: this.diskFull !== undefined,
      replay: this.options.replayStatus?.(region) ?? null,
    };
  }

  // Stage 1: validate -----------------------------------------------------------------------

  private async validate(arrival: Arrival, resolve: (a: IngestAnswer) => void): Promise<Validated> {
    const p = arrival.payload;
    const source = arrival.source;
    try {
      if (p.kind === 'error') return { arrival, resolve, refusal: { status: p.status, error: p.error } };
      let intake: Intake;
      // The region's component settings say how to read its FITS files.
      const settings = this.store.region(arrival.region)?.settings.components ?? {};
      if (p.kind === 'frame') intake = intakeFrame(frameFromInput(p, source), source);
      else if (p.kind === 'file') intake = await this.intake.take({ kind: 'file', path: p.path, source, settings });
      else intake = await this.intake.take({ kind: p.kind, bytes: p.bytes, source, settings });
      return { arrival, resolve, intake };
    } catch (e) {
      if (e instanceof IntakeRefusal) return { arrival, resolve, refusal: { status: e.status, error: e.error } };
      if (e instanceof InputError) return { arrival, resolve, refusal: { status: intakeStatus(e), error: e } };
      return { arrival, resolve, refusal: { status: 400, error: new InputError(source, '(body)', String((e as Error).message ?? e)) } };
    }
  }

  // Stage 2: order and store ----------------------------------------------------------------

  private async refusalAnswer(region: string, status: number, e: InputError, source: string, frameTime?: number): Promise<IngestAnswer> {
    await this.recordRefusal(region, { status, source, field: e.field, reason: e.message, ...(frameTime !== undefined && { frameTime }) });
    return { status, body: { error: e.message, field: e.field, problem: e.problem } };
  }

  /**
   * Records a refusal and lets the refusals rule see it. Never throws: the sender's answer does
   * not depend on the record, and a record that cannot be written (a full disk) is logged.
   */
  private async recordRefusal(region: string, r: { status: number; source: string; field: string; reason: string; frameTime?: number }): Promise<void> {
    this.log(`refused (${region}, ${r.source}): ${r.reason}`);
    try {
      const now = Date.now();
      await this.writer.call('recordRefusal', region, r, now);
      this.noteWriteOk();
      const row = this.store.region(region);
      if (!row) return;
      // The data-quality rule sees every refusal.
      const c = this.carry(region);
      const p = ruleParams(RULES.find((d) => d.id === 'refusals')!, row.settings.rules);
      const times = this.store.refusalTimes(region, now - Number(p.windowS) * 1000);
      const step = accumulateRefusal(c, now, times, { rules: row.settings.rules });
      const next = step.state;
      this.setCarry(region, next);
      await this.writer.call('setRegionCarry', region, next);
      for (const ch of step.changes) this.announceAlert(region, ch.alert, ch.change, row.settings);
      this.hub.send(region, { type: 'status', status: this.status(region) });
    } catch (e) {
      if (isDiskFull(e)) this.noteDiskFull('recording a refusal', e);
      else this.quietLog('refusal-write', `recording a refusal for ${region} failed: ${(e as Error).message ?? e}`);
      // What is in memory may be ahead of the store: read it back from there next time.
      this.carries.delete(region);
    }
  }

  private async orderAndStore(v: Validated): Promise<void> {
    const { arrival, resolve } = v;
    const name = arrival.region;
    try {
      if (v.refusal) return resolve(await this.refusalAnswer(name, v.refusal.status, v.refusal.error, arrival.source));
      const { meta: frame, hash, bytes } = v.intake!;
      let region = this.store.region(name);
      // Live frames only (replays carry archive times): nothing from the future.
      const maxAheadS = (region?.settings ?? DEFAULT_SETTINGS).maxAheadS;
      const ahead = frame.time - Date.now();
      if (arrival.payload.kind !== 'frame' && ahead > maxAheadS * 1000) {
        return resolve(await this.refusalAnswer(name, 422, new InputError(arrival.source, 'time',
          `${new Date(frame.time).toISOString()} is ${(ahead / 1000).toFixed(0)} s after the monitor's clock, beyond the region's maxAheadS of ${maxAheadS} s: an observation cannot come from the future`), arrival.source, frame.time));
      }
      if (!region) {
        if (!arrival.mayCreate) {
          return resolve(await this.refusalAnswer(name, 404, new InputError(arrival.source, 'region', `no region named "${name}"; it is created on the first frame sent with the token`), arrival.source, frame.time));
        }
        region = await this.writer.call('createRegion', name);
        this.log(`region ${name} created`);
      }
      const removed = this.store.removedFrame(name, hash);
      if (removed) {
        return resolve(await this.refusalAnswer(name, 409, new InputError(arrival.source, '(frame)',
          `this frame (${new Date(frame.time).toISOString()}) was removed from the region on ${new Date(removed.removed).toISOString()} and is not taken again`), arrival.source, frame.time));
      }
      const dup = this.store.frameByHash(name, hash);
      if (dup) {
        await this.writer.call('countDuplicate', name);
        return resolve({ status: 200, body: { status: 'duplicate', frame_id: dup.id, time: new Date(dup.time).toISOString() } });
      }
      const first = this.store.firstFrame(name);
      if (first && !sameGrid(first, frame)) {
        return resolve(await this.refusalAnswer(name, 409, new InputError(arrival.source, 'grid',
          `the region's frames are ${first.nx}x${first.ny} pixels of ${first.dx}x${first.dy} Mm; this one is ${frame.nx}x${frame.ny} of ${frame.dx}x${frame.dy} Mm`), arrival.source, frame.time));
      }
      const same = this.store.frameAtTime(name, frame.time);
      if (same) {
        return resolve(await this.refusalAnswer(name, 409, new InputError(arrival.source, 'time',
          `another frame (id ${same.id}) with the time ${new Date(frame.time).toISOString()} is already stored, with different content`), arrival.source, frame.time));
      }
      const latest = this.store.latestTime(name);
      const latenessS = region.settings.latenessS;
      if (latest !== undefined && frame.time < latest - latenessS * 1000) {
        return resolve(await this.refusalAnswer(name, 409, new InputError(arrival.source, 'time',
          `too late: ${new Date(frame.time).toISOString()} is ${((latest - frame.time) / 1000).toFixed(0)} s before the newest frame (${new Date(latest).toISOString()}), beyond the region's lateness of ${latenessS} s`), arrival.source, frame.time));
      }
      const file = join('frames', name, `${hash}.hlcm`);
      await writeFileAtomic(join(this.store.dataDir, file), bytes, 0o600);
      const id = await this.writer.call('insertFrame', {
        region: name, time: frame.time, hash, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy,
        source: arrival.source, received: Date.now(), file,
      });
      this.noteWriteOk();
      resolve({ status: 201, body: { status: 'stored', frame_id: id, time: new Date(frame.time).toISOString() } });
      this.work$.next(name);
    } catch (e) {
      if (isDiskFull(e)) {
        // Nothing was acknowledged: the sender keeps the frame and sends it again later.
        this.noteDiskFull(`a frame for ${name}`, e);
        const retryAfterS = 30;
        return resolve({ status: 507, retryAfterS, body: { error: 'the monitor\'s disk is full: the frame was not stored; send it again later', field: '(disk)', problem: 'no space left to store the frame' } });
      }
      this.log(`storing a frame for ${name} failed: ${(e as Error).stack ?? e}`);
      resolve({ status: 500, body: { error: 'the frame could not be stored', field: '(server)', problem: String((e as Error).message ?? e) } });
    }
  }

  // Stages 3-8: pair, compute, accumulate, evaluate, store, broadcast -----------------------

  /**
   * Removes a stored frame (an operator's decision: a frame that should never have been taken).
   * Runs in the region's processing turn: the samples from the frame on are removed, the region
   * goes back to the frame before it and the later frames are processed again from their stored
   * files, so the series is that of the region without the frame. The frame's content is
   * remembered, so the same frame sent again is refused. Resolves when the removal is stored
   * (the recomputation follows).
   */
  removeFrame(region: string, id: number): Promise<{ frame_id: number; time: string; recomputed: number }> {
    return new Promise((resolve, reject) => {
      const list = this.removals.get(region) ?? [];
      list.push({ id, resolve, reject });
      this.removals.set(region, list);
      this.work$.next(region);
    });
  }

  private async applyRemovals(region: string): Promise<boolean> {
    const list = this.removals.get(region);
    if (!list) return false;
    this.removals.delete(region);
    let any = false;
    for (const r of list) {
      try {
        const f = this.store.frame(region, r.id);
        if (!f) throw new InputError(region, 'id', `region ${region} has no frame ${r.id}`);
        const before = this.store.lastProcessed(region, f.time);
        const carry = this.restoredCarry(region, before);
        const n = await this.writer.call('removeFrame', region, f.id, before?.time ?? Number.MIN_SAFE_INTEGER, carry, Date.now());
        this.setCarry(region, carry);
        this.pool.forget(region);
        // The files go after the commit (a file left by a crash here is only unused).
        for (const file of [f.file, f.mapsFile]) if (file) await rm(join(this.store.dataDir, file), { force: true }).catch(() => undefined);
        this.log(`${region}: frame ${f.id} (${new Date(f.time).toISOString()}) removed; ${n} later frame(s) are processed again`);
        r.resolve({ frame_id: f.id, time: new Date(f.time).toISOString(), recomputed: n });
        any = true;
      } catch (e) {
        if (isDiskFull(e)) this.noteDiskFull(`removing frame ${r.id}`, e);
        this.carries.delete(region);
        r.reject(e as Error);
      }
    }
    return any;
  }

  /**
   * The carry after `before` (empty when none), keeping what happened outside the frame stream:
   * the refusals rule and acknowledgements.
   */
  private restoredCarry(region: string, before: FrameRow | undefined): Carry {
    const restored = before ? this.store.frameCarry(before.id) ?? emptyCarry() : emptyCarry();
    const current = this.carry(region);
    const machines = { ...restored.rules.machines };
    if (current.rules.machines.refusals) machines.refusals = current.rules.machines.refusals;
    for (const [id, m] of Object.entries(machines)) {
      const now = current.rules.machines[id];
      if (now && now.record.state === m.record.state && now.record.acknowledged) machines[id] = { ...m, record: { ...m.record, acknowledged: true } };
    }
    return { ...restored, rules: { ...restored.rules, machines } };
  }

  /** Frames to process in time order, after rewinding the region when one came in late. */
  private async takePending(region: string): Promise<FrameRow[]> {
    let removed = await this.applyRemovals(region);
    const redo = this.redoFrom.get(region);
    if (redo !== undefined) {
      const before = this.store.lastProcessed(region, redo);
      const carry = this.restoredCarry(region, before);
      try {
        const n = await this.writer.call('rewind', region, before?.time ?? Number.MIN_SAFE_INTEGER, carry);
        this.redoFrom.delete(region);
        this.setCarry(region, carry);
        this.pool.forget(region);
        this.log(`${region}: ${n} frame(s) from ${new Date(redo).toISOString()} on are processed again (an earlier run could not write their results: the disk was full)`);
        removed = true;
      } catch (e) {
        if (isDiskFull(e)) throw new DiskFullError(e, 'processing frames again');
        throw e;
      }
    }
    const pending = this.store.unprocessed(region);
    if (pending.length === 0) return [];
    const mark = (frames: FrameRow[]) => frames.map((f) => ({ ...f, rewound: true }) as FrameRow);
    const last = this.store.lastProcessed(region);
    if (last && pending[0].time < last.time) {
      const before = this.store.lastProcessed(region, pending[0].time);
      const carry = this.restoredCarry(region, before);
      let n: number;
      try {
        n = await this.writer.call('rewind', region, before?.time ?? Number.MIN_SAFE_INTEGER, carry);
      } catch (e) {
        if (isDiskFull(e)) throw new DiskFullError(e, 'putting a late frame back in order');
        throw e;
      }
      this.setCarry(region, carry);
      this.pool.forget(region);
      this.log(`${region}: a frame came in late; ${n} later frame(s) are processed again in order`);
      return mark(this.store.unprocessed(region));
    }
    return removed ? mark(pending) : pending;
  }

  /** Tries the region again after a pause (its frames wait for disk space). */
  private scheduleDiskRetry(region: string): void {
    if (this.closed || this.diskRetries.has(region)) return;
    const attempt = this.lastDiskAttempt.get(region) ?? 0;
    const delay = DISK_RETRY_MS[Math.min(attempt, DISK_RETRY_MS.length - 1)];
    this.lastDiskAttempt.set(region, attempt + 1);
    const timer = setTimeout(() => {
      this.diskRetries.delete(region);
      this.work$.next(region);
    }, delay);
    timer.unref();
    this.diskRetries.set(region, { timer, attempt });
  }

  private processPending$(region: string): Observable<unknown> {
    let rewound = false;
    return defer(() => {
      this.activeWork++;
      return from(this.runTurns(region).then(() => this.takePending(region)));
    }).pipe(
      mergeMap((frames) => {
        rewound = frames.some((f) => (f as FrameRow & { rewound?: boolean }).rewound);
        return from(frames);
      }),
      // One frame at a time through the stages, so each is paired with a committed predecessor;
      // on shutdown the rest stays pending for the restart.
      // A turn waiting (a region operation) stops the run at the next frame: the rest stays
      // pending and is taken after the turn.
      concatMap((frame) => defer(() => (this.closed || this.turns.has(region) ? EMPTY : of(frame))).pipe(
        // pair: with the last frame processed before it
        map((f) => ({ frame: f, previous: this.store.lastGood(region, f.time), started: Date.now() })),
        // compute in a worker
        concatMap(({ frame: f, previous, started }) => from(this.compute(region, f, previous).then((a) => {
          this.frameMs = 0.8 * this.frameMs + 0.2 * (Date.now() - started);
          return a;
        }))),
        // accumulate: the budget, the rules and the series row
        map((a) => this.accumulate(region, a)),
        // store
        concatMap((a) => from(this.commit(region, a).then(() => a))),
        // broadcast
        tap((a) => this.broadcast(region, a)),
      )),
      catchError((e) => {
        if (e instanceof DiskFullError) {
          // The frame stays pending; the region is tried again when space may be back.
          this.noteDiskFull(`${region}: ${e.what}`, e.cause);
          this.scheduleDiskRetry(region);
        } else this.log(`${region}: processing stopped: ${(e as Error).stack ?? e}`);
        return EMPTY;
      }),
      tap({
        finalize: () => {
          this.activeWork--;
          if (rewound) this.hub.resync(region);
          for (const w of this.idleWaiters.splice(0)) w();
        },
      }),
    );
  }

  private async compute(region: string, frame: FrameRow, previous: FrameRow | undefined): Promise<Analysed> {
    const settings = this.store.region(region)?.settings;
    const abs = (p: string) => join(this.store.dataDir, p);
    const mapsFile = join('maps', region, `${frame.id}.hlcm`);
    // What rebuilds the worker's state after `previous` when it does not follow it (read only
    // then): the frames within the motion baseline up to it and the memory stored with it.
    const primer = previous && {
      id: previous.id,
      frames: () => {
        const spanMs = 1000 * restoreSpanS((settings?.analysis ?? {}) as AnalysisSettings);
        const frames = this.store.goodFramesBetween(region, previous.time - spanMs, previous.time).map((f) => abs(f.file));
        const memory = this.store.frameMemory(previous.id);
        return { frames, ...(memory !== undefined && { memory }) };
      },
    };
    let reply: WorkerReply;
    try {
      reply = await this.pool.analyse({
        region, frameId: frame.id, framePath: abs(frame.file),
        ...(previous && { previous: primer }),
        settings: settings?.analysis ?? {}, mapsPath: abs(mapsFile),
      });
    } catch (e) {
      // A worker that died: once more on its replacement, then the frame is marked failed.
      try {
        reply = await this.pool.analyse({
          region, frameId: frame.id, framePath: abs(frame.file),
          ...(previous && { previous: primer }),
          settings: settings?.analysis ?? {}, mapsPath: abs(mapsFile),
        });
      } catch (e2) {
        reply = { id: 0, ok: false, error: { source: frame.source, field: '(analysis)', problem: String((e2 as Error).message ?? e), message: String(e2) } };
      }
    }
    if (!reply.ok && reply.error.diskFull) {
      // The maps could not be written for lack of space: not a failure of the frame.
      throw new DiskFullError(new Error(reply.error.problem), `frame ${frame.id} (its maps could not be written)`);
    }
    const a: Analysed = { frame, reply, carry: this.carry(region), changes: [] };
    if (!reply.ok) a.failure = { field: reply.error.field, problem: reply.error.problem };
    else if (reply.sample) a.sample = reply.sample;
    return a;
  }

  /** The budget, the rules and the series row of the frame's sample: one core step (core/accumulate.ts). */
  private accumulate(region: string, a: Analysed): Analysed {
    a.carry = this.carry(region);
    if (!a.sample) return a;
    const settings = this.store.region(region)?.settings;
    try {
      const step = accumulate(a.carry, a.sample, { budget: settings?.budget, rules: settings?.rules ?? {} }, { frameId: a.frame.id });
      a.row = step.row;
      a.carry = step.state;
      a.changes = [...step.changes];
    } catch (e) {
      a.failure = { field: 'time', problem: (e as Error).message };
      a.sample = undefined;
    }
    return a;
  }

  private async commit(region: string, a: Analysed): Promise<void> {
    const reply = a.reply;
    // In memory first (synchronously after the rules), so that an acknowledgement or a refusal
    // arriving while the write is under way builds on this state, and its own write comes after.
    this.setCarry(region, a.carry);
    try {
      await this.commitWrite(region, a, reply);
    } catch (e) {
      // Not stored: the state in memory goes back to what the store holds, the frame stays pending.
      this.carries.delete(region);
      if (isDiskFull(e)) throw new DiskFullError(e, `frame ${a.frame.id} (its result could not be stored)`);
      throw e;
    }
    this.noteWriteOk();
    this.lastDiskAttempt.delete(region);
    if (a.failure) {
      await this.recordRefusal(region, {
        status: 422, source: a.frame.source, field: a.failure.field,
        reason: `frame ${a.frame.id} (${new Date(a.frame.time).toISOString()}) was stored but its analysis failed: ${a.failure.problem}`,
        frameTime: a.frame.time,
      });
    }
  }

  private async commitWrite(region: string, a: Analysed, reply: WorkerReply): Promise<void> {
    await this.writer.call('commitProcessed', {
      region, frameId: a.frame.id, processed: a.failure ? 2 : 1, carry: a.carry,
      ...(a.row && a.sample && { row: a.row, sampleTime: a.sample.time }),
      ...(reply.ok && reply.mapsWritten && { mapsFile: join('maps', region, `${a.frame.id}.hlcm`) }),
      ...(reply.ok && reply.waiting !== undefined && { waiting: reply.waiting }),
      ...(a.failure && { waiting: `analysis failed: ${a.failure.problem}` }),
      ...(reply.ok && reply.footpoints !== undefined && { footpoints: reply.footpoints }),
      ...(reply.ok && reply.events !== undefined && { events: reply.events }),
      ...(reply.ok && reply.memory !== undefined && { memory: reply.memory }),
    });
  }

  private broadcast(region: string, a: Analysed): void {
    this.wakeRoomWaiters(region);
    this.hub.send(region, { type: 'frame', frame_id: a.frame.id, time: new Date(a.frame.time).toISOString() });
    if (a.row) this.hub.send(region, { type: 'sample', sample: a.row });
    const settings = this.store.region(region)?.settings;
    for (const ch of a.changes) if (settings) this.announceAlert(region, ch.alert, ch.change, settings);
    this.hub.send(region, { type: 'status', status: this.status(region) });
    this.options.onProcessed?.(region, a.frame.id);
  }

  private announceAlert(region: string, alert: AlertRecord, change: AlertChange, settings: RegionSettings): void {
    this.hub.send(region, { type: 'alert', alert });
    this.log(`${region}: alert ${alert.rule} ${change.from} -> ${change.to} (value ${change.evidence.value})`);
    this.options.onAlert?.(region, alert, change, settings);
  }
}
