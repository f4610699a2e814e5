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
import { EMPTY, Subject, catchError, concatMap, defer, filter, finalize, firstValueFrom, from, groupBy, map, mergeMap, of, startWith, tap } from 'rxjs';
import { accumulateRefusal, seriesCadenceS } from '../core/accumulate.js';
import { InputError } from '../core/inputError.js';
import type { AlertChange, AlertRecord } from '../core/alerts/alertState.js';
import { acknowledgeAlert, newAlertMachine } from '../core/alerts/alertState.js';
import type { RulesState } from '../core/alerts/evaluateRules.js';
import { alertRecords } from '../core/alerts/evaluateRules.js';
import { RULES, ruleParams } from '../core/alerts/ruleCatalogue.js';
import type { ViewerMessage, WireStatus } from '../core/wire/viewerMessages.js';
import { alertMessage, statusMessage } from '../core/wire/viewerMessages.js';
import { DiskFullError, isDiskFull } from './diskFull.js';
import { DiskStatus } from './diskStatus.js';
import type { ComputePool } from './computePool.js';
import type { IntakePool } from './intakePool.js';
import { QuietLog } from './quietLog.js';
import { RegionQueues } from './regionQueues.js';
import type { RegionSettings } from './regionSettings.js';
import type { AccumulationState, FrameRow, Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';
import { emptyAccumulation } from './store.js';
import { accumulateFrames } from './stages/accumulateFrames.js';
import type { Arrival, IngestAnswer, Queued } from './stages/arrivalValues.js';
import { broadcastFrames } from './stages/broadcastFrames.js';
import { commitFrames } from './stages/commitFrames.js';
import { computeFrames } from './stages/computeFrames.js';
import { pairFrames } from './stages/pairFrames.js';
import { storeArrivals } from './stages/storeArrivals.js';
import { validateArrivals } from './stages/validateArrivals.js';

export type { Arrival, IngestAnswer, Payload } from './stages/arrivalValues.js';

export interface Broadcaster {
  send(region: string, message: ViewerMessage): void;
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

const isoOrNull = (t: number | undefined) => (t === undefined ? null : new Date(t).toISOString());

export class Pipeline {
  private readonly arrivals$ = new Subject<Queued>();
  private readonly work$ = new Subject<string>();
  /** Every change of the work under way (arrivals, runs): idle() and close() listen. */
  private readonly activity$ = new Subject<void>();
  private readonly accumulations = new Map<string, AccumulationState>();
  private readonly log: (line: string) => void;
  private readonly quiet: QuietLog;
  private readonly disk: DiskStatus;
  private readonly queues: RegionQueues;
  /** Arrivals not yet answered, all regions. */
  private inFlight = 0;
  /** Processing runs under way, all regions. */
  private activeWork = 0;
  /** Mean processing time of a frame, ms (exponential average), for Retry-After. */
  private frameMs = 1000;
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
  readonly queueLimit: number;
  private closed = false;

  constructor(
    private readonly store: Store,
    private readonly writer: StoreWriter,
    private readonly pool: ComputePool,
    private readonly intake: IntakePool,
    private readonly hub: Broadcaster,
    private readonly options: PipelineOptions = {},
  ) {
    this.log = options.log ?? (() => undefined);
    this.quiet = new QuietLog(this.log);
    this.disk = new DiskStatus(this.log, this.quiet);
    this.queueLimit = options.queueLimit ?? DEFAULT_QUEUE_LIMIT;
    this.queues = new RegionQueues(this.queueLimit, (r) => this.store.unprocessedCount(r));
    this.arrivals$.pipe(
      groupBy((q) => q.arrival.region),
      mergeMap((group$) => group$.pipe(
        validateArrivals({ intake: this.intake, componentSettings: (r) => this.store.region(r)?.settings.components ?? {} }),
        storeArrivals({
          store: this.store, writer: this.writer, log: this.log, disk: this.disk,
          refuse: (region, status, e, source, frameTime) => this.refusalAnswer(region, status, e, source, frameTime),
          stored: (region) => this.work$.next(region),
        }),
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
    if (!arrival.admitted) this.queues.count(region, +1);
    else this.queues.notePeak(region);
    return new Promise<IngestAnswer>((resolve) => {
      this.arrivals$.next({
        arrival,
        resolve: (a) => {
          this.inFlight--;
          if (!arrival.admitted) this.queues.count(region, -1);
          resolve(a);
          this.queues.wake(region);
          this.activity$.next();
        },
      });
    });
  }

  /** The longest a region's queue has been since start (the health answer reports it). */
  get queuePeak(): number {
    return this.queues.peak;
  }

  /**
   * Admits a sender to the region's queue before its frame is read (HTTP: before the body), or
   * answers false when the queue is at its bound. An admitted sender holds its place until
   * `release` (called once, when its request ends); its frame goes to `ingest` with `admitted`.
   */
  admit(region: string): boolean {
    return !this.closed && this.queues.admit(region);
  }

  release(region: string): void {
    this.queues.count(region, -1);
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
    return this.disk.state();
  }

  /** A region's queue: frames arriving (not yet answered) plus frames stored and not yet processed. */
  regionQueue(region: string): number {
    return this.queues.length(region);
  }

  /** True when the region's queue is at its bound: senders are held back (503, a paused socket). */
  queueFull(region: string): boolean {
    return this.queues.isFull(region);
  }

  /** Seconds a held-back sender should wait: about the time to work one frame off the queue. */
  retryAfterS(): number {
    return Math.min(120, Math.max(1, Math.ceil(this.frameMs / 1000)));
  }

  /** Resolves once the region's queue is below its bound (or the pipeline closes, or `stop()` says so). */
  waitForRoom(region: string, stop: () => boolean = () => false): Promise<void> {
    return this.queues.waitForRoom(region, stop);
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
  resetAccumulation(name: string): AccumulationState {
    return this.restoredAccumulation(name, undefined);
  }

  /** After a reset (call while the region is still): its state is `carry`, viewers get the empty snapshot. */
  regionReset(name: string, carry: AccumulationState): void {
    this.forgetState(name);
    this.setAccumulation(name, carry);
    this.hub.resync(name);
  }

  private forgetState(name: string): void {
    this.accumulations.delete(name);
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
    await this.until(() => this.inFlight === 0 && this.activeWork === 0 && this.store.pendingCount() === 0);
  }

  /** Stops taking new frames; resolves when the frame being processed is committed. */
  async close(): Promise<void> {
    this.closed = true;
    for (const r of this.diskRetries.values()) clearTimeout(r.timer);
    this.diskRetries.clear();
    this.queues.close();
    await this.until(() => this.activeWork === 0 && this.inFlight === 0);
  }

  /** Resolves at the first moment `done()` holds, checked now and after every change of the work under way. */
  private until(done: () => boolean): Promise<void> {
    return firstValueFrom(this.activity$.pipe(startWith(undefined), filter(done), map(() => undefined)));
  }

  // Region state ----------------------------------------------------------------------------

  accumulation(region: string): AccumulationState {
    let c = this.accumulations.get(region);
    if (!c) { c = this.store.regionAccumulation(region); this.accumulations.set(region, c); }
    return c;
  }

  private setAccumulation(region: string, c: AccumulationState): void {
    this.accumulations.set(region, c);
  }

  /** Every enabled rule's alert (quiet ones included), in catalogue order. */
  alerts(region: string): AlertRecord[] {
    const settings = this.store.region(region)?.settings;
    const rules = this.accumulation(region).rules;
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
    const c = this.accumulation(region);
    const m = c.rules.machines[id];
    if (!m) return undefined;
    const rules: RulesState = { ...c.rules, machines: { ...c.rules.machines, [id]: acknowledgeAlert(m, now) } };
    const next = { ...c, rules };
    try {
      await this.writer.call('setRegionAccumulation', region, next);
    } catch (e) {
      if (isDiskFull(e)) this.disk.full('an acknowledgement', e);
      throw e;
    }
    this.setAccumulation(region, next);
    const alert = rules.machines[id].record;
    this.hub.send(region, alertMessage(alert));
    return alert;
  }

  status(region: string): WireStatus {
    const c = this.accumulation(region);
    return {
      last_frame_time: isoOrNull(this.store.latestTime(region)),
      cadence_s: seriesCadenceS(c.budget.intervals) ?? null,
      refusals: this.store.refusalCount(region),
      gaps: c.budget.gaps.length,
      queue: this.regionQueue(region),
      queue_limit: this.queueLimit,
      disk_full: this.disk.isFull,
      replay: this.options.replayStatus?.(region) ?? null,
    };
  }

  // Refusals (the arrival stages in server/stages/ answer through these) -------------------

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
      this.disk.writeOk();
      const row = this.store.region(region);
      if (!row) return;
      // The data-quality rule sees every refusal.
      const c = this.accumulation(region);
      const p = ruleParams(RULES.find((d) => d.id === 'refusals')!, row.settings.rules);
      const times = this.store.refusalTimes(region, now - Number(p.windowS) * 1000);
      const step = accumulateRefusal(c, now, times, { rules: row.settings.rules });
      const next = step.state;
      this.setAccumulation(region, next);
      await this.writer.call('setRegionAccumulation', region, next);
      for (const ch of step.changes) this.announceAlert(region, ch.alert, ch.change, row.settings);
      this.hub.send(region, statusMessage(this.status(region)));
    } catch (e) {
      if (isDiskFull(e)) this.disk.full('recording a refusal', e);
      else this.quiet.say('refusal-write', `recording a refusal for ${region} failed: ${(e as Error).message ?? e}`);
      // What is in memory may be ahead of the store: read it back from there next time.
      this.accumulations.delete(region);
    }
  }

  // Processing: order (rewind, removals), then per frame the stages in server/stages/ --------

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
        const carry = this.restoredAccumulation(region, before);
        const n = await this.writer.call('removeFrame', region, f.id, before?.time ?? Number.MIN_SAFE_INTEGER, carry, Date.now());
        this.setAccumulation(region, carry);
        this.pool.forget(region);
        // The files go after the commit (a file left by a crash here is only unused).
        for (const file of [f.file, f.mapsFile]) if (file) await rm(join(this.store.dataDir, file), { force: true }).catch(() => undefined);
        this.log(`${region}: frame ${f.id} (${new Date(f.time).toISOString()}) removed; ${n} later frame(s) are processed again`);
        r.resolve({ frame_id: f.id, time: new Date(f.time).toISOString(), recomputed: n });
        this.queues.wake(region);
        any = true;
      } catch (e) {
        if (isDiskFull(e)) this.disk.full(`removing frame ${r.id}`, e);
        this.accumulations.delete(region);
        r.reject(e as Error);
      }
    }
    return any;
  }

  /**
   * The carry after `before` (empty when none), keeping what happened outside the frame stream:
   * the refusals rule and acknowledgements.
   */
  private restoredAccumulation(region: string, before: FrameRow | undefined): AccumulationState {
    const restored = before ? this.store.frameAccumulation(before.id) ?? emptyAccumulation() : emptyAccumulation();
    const current = this.accumulation(region);
    const machines = { ...restored.rules.machines };
    if (current.rules.machines.refusals) machines.refusals = current.rules.machines.refusals;
    for (const [id, m] of Object.entries(machines)) {
      const now = current.rules.machines[id];
      if (now && now.record.state === m.record.state && now.record.acknowledged) machines[id] = { ...m, record: { ...m.record, acknowledged: true } };
    }
    return { ...restored, rules: { ...restored.rules, machines } };
  }

  /**
   * Stage "order": the frames to process in time order, after the removals asked for and after
   * rewinding the region when one came in late; `rewound` when results already shown changed.
   */
  private async takePending(region: string): Promise<{ frames: FrameRow[]; rewound: boolean }> {
    let removed = await this.applyRemovals(region);
    const redo = this.redoFrom.get(region);
    if (redo !== undefined) {
      const before = this.store.lastProcessed(region, redo);
      const carry = this.restoredAccumulation(region, before);
      try {
        const n = await this.writer.call('rewind', region, before?.time ?? Number.MIN_SAFE_INTEGER, carry);
        this.redoFrom.delete(region);
        this.setAccumulation(region, carry);
        this.pool.forget(region);
        this.log(`${region}: ${n} frame(s) from ${new Date(redo).toISOString()} on are processed again (an earlier run could not write their results: the disk was full)`);
        removed = true;
      } catch (e) {
        if (isDiskFull(e)) throw new DiskFullError(e, 'processing frames again');
        throw e;
      }
    }
    const pending = this.store.unprocessed(region);
    if (pending.length === 0) return { frames: [], rewound: false };
    const last = this.store.lastProcessed(region);
    if (last && pending[0].time < last.time) {
      const before = this.store.lastProcessed(region, pending[0].time);
      const carry = this.restoredAccumulation(region, before);
      let n: number;
      try {
        n = await this.writer.call('rewind', region, before?.time ?? Number.MIN_SAFE_INTEGER, carry);
      } catch (e) {
        if (isDiskFull(e)) throw new DiskFullError(e, 'putting a late frame back in order');
        throw e;
      }
      this.setAccumulation(region, carry);
      this.pool.forget(region);
      this.log(`${region}: a frame came in late; ${n} later frame(s) are processed again in order`);
      return { frames: this.store.unprocessed(region), rewound: true };
    }
    return { frames: pending, rewound: removed };
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
    const frameStages = (frame: FrameRow): Observable<unknown> => of(frame).pipe(
      // A turn waiting (a region operation) or a shutdown stops the run at the next frame: the
      // rest stays pending and is taken after the turn (or at the restart).
      filter(() => !this.closed && !this.turns.has(region)),
      pairFrames((time) => this.store.lastGood(region, time)),
      computeFrames({ region, store: this.store, pool: this.pool, tookMs: (ms) => { this.frameMs = 0.8 * this.frameMs + 0.2 * ms; } }),
      accumulateFrames({ state: () => this.accumulation(region), settings: () => this.store.region(region)?.settings }),
      commitFrames({
        region, writer: this.writer, disk: this.disk,
        setState: (state) => this.setAccumulation(region, state),
        dropState: () => this.accumulations.delete(region),
        committed: () => this.lastDiskAttempt.delete(region),
        refuse: (r) => this.recordRefusal(region, r),
      }),
      tap(() => this.queues.wake(region)),
      broadcastFrames({
        region,
        send: (message) => this.hub.send(region, message),
        announce: (alert, change) => {
          const settings = this.store.region(region)?.settings;
          if (settings) this.announceAlert(region, alert, change, settings);
        },
        status: () => this.status(region),
        processed: (id) => this.options.onProcessed?.(region, id),
      }),
    );
    return defer(() => {
      this.activeWork++;
      this.activity$.next();
      return from(this.runTurns(region).then(() => this.takePending(region)));
    }).pipe(
      // One frame at a time through the stages, so each is paired with a committed predecessor.
      mergeMap((pending) => {
        rewound = pending.rewound;
        return from(pending.frames);
      }),
      concatMap(frameStages),
      catchError((e) => {
        if (e instanceof DiskFullError) {
          // The frame stays pending; the region is tried again when space may be back.
          this.disk.full(`${region}: ${e.what}`, e.cause);
          this.scheduleDiskRetry(region);
        } else this.log(`${region}: processing stopped: ${(e as Error).stack ?? e}`);
        return EMPTY;
      }),
      finalize(() => {
        this.activeWork--;
        if (rewound) this.hub.resync(region);
        this.activity$.next();
      }),
    );
  }

  private announceAlert(region: string, alert: AlertRecord, change: AlertChange, settings: RegionSettings): void {
    this.hub.send(region, alertMessage(alert));
    this.log(`${region}: alert ${alert.rule} ${change.from} -> ${change.to} (value ${change.evidence.value})`);
    this.options.onAlert?.(region, alert, change, settings);
  }
}
