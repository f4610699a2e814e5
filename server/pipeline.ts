// The monitor's pipeline as an rxjs graph. Arrivals from every source (HTTP, WebSocket, watched
// folder, demo) merge into one stream; per region they are
//   validate -> order and store (duplicates, shape, lateness; the sender's answer) ->
//   pair (with the last processed frame) -> compute in a worker -> accumulate the budget ->
//   evaluate the rules -> store -> broadcast.
// The store stage answers the sender only after the frame is on disk and committed. Processing
// always takes the stored, not-yet-processed frames of a region in time order; a frame that
// arrives after later ones (within the lateness) rewinds the region to the frame before it and
// the later frames are processed again, so the stored result is always that of the in-order run.
// A restart just asks every region to process what is pending.
import { join } from 'node:path';
import type { Observable } from 'rxjs';
import { Subject, concatMap, defer, from, groupBy, map, mergeMap, of, tap, catchError, EMPTY } from 'rxjs';
import { accumulateBudget } from '../core/budget.js';
import type { BudgetPoint } from '../core/budget.js';
import type { Frame } from '../core/frame.js';
import { sameGrid } from '../core/grid.js';
import { InputError } from '../core/inputError.js';
import type { RateSample } from '../core/rateSample.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import { seriesRow } from '../core/seriesColumns.js';
import type { AlertChange, AlertRecord } from '../core/alerts/alertState.js';
import { acknowledgeAlert, newAlertMachine } from '../core/alerts/alertState.js';
import type { RulesState } from '../core/alerts/evaluateRules.js';
import { alertRecords, evaluateRules } from '../core/alerts/evaluateRules.js';
import { RULES, ruleParams } from '../core/alerts/ruleCatalogue.js';
import { writeFileAtomic } from './atomicFile.js';
import type { ComputePool } from './computePool.js';
import type { WorkerReply } from './computeMessages.js';
import type { Intake } from './frameIntake.js';
import { frameFromInput, intakeFrame, intakeStatus } from './frameIntake.js';
import type { IntakePool } from './intakePool.js';
import { IntakeRefusal } from './intakePool.js';
import type { RegionSettings } from './regionSettings.js';
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
}

export type IngestAnswer =
  | { readonly status: 201; readonly body: { status: 'stored'; frame_id: number; time: string } }
  | { readonly status: 200; readonly body: { status: 'duplicate'; frame_id: number; time: string } }
  | { readonly status: number; readonly body: { error: string; field: string; problem: string } };

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
}

interface Validated {
  readonly arrival: Arrival;
  readonly intake?: Intake;
  readonly refusal?: { status: number; error: InputError; frameTime?: number };
  readonly resolve: (a: IngestAnswer) => void;
}

interface Analysed {
  readonly frame: FrameRow;
  readonly reply: WorkerReply;
  sample?: RateSample;
  point?: BudgetPoint;
  row?: SeriesRow;
  carry: Carry;
  changes: { alert: AlertRecord; change: AlertChange }[];
  failure?: { field: string; problem: string };
}

const isoOrNull = (t: number | undefined) => (t === undefined ? null : new Date(t).toISOString());

export class Pipeline {
  private readonly arrivals$ = new Subject<{ arrival: Arrival; resolve: (a: IngestAnswer) => void }>();
  private readonly work$ = new Subject<string>();
  private readonly carries = new Map<string, Carry>();
  private readonly log: (line: string) => void;
  private inFlight = 0;
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
    this.arrivals$.pipe(
      groupBy((a) => a.arrival.region),
      mergeMap((group$) => group$.pipe(
        // validate: parse, check, hash and encode (in the intake worker)
        concatMap((a) => from(this.validate(a.arrival, a.resolve))),
        // order and store: duplicates, shape, lateness; durable write; the sender's answer
        concatMap((v) => from(this.orderAndStore(v))),
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
    return new Promise<IngestAnswer>((resolve) => {
      this.arrivals$.next({ arrival, resolve: (a) => { this.inFlight--; resolve(a); } });
    });
  }

  /** Records a refusal decided outside the pipeline (token, body size, content type). */
  async refuse(region: string, status: number, source: string, field: string, reason: string): Promise<IngestAnswer> {
    await this.recordRefusal(region, { status, source, field, reason });
    return { status, body: { error: reason, field, problem: reason } };
  }

  /** Asks every region to process what is stored and pending (at start). */
  resumeAll(): void {
    for (const r of this.store.regions()) this.work$.next(r.name);
  }

  queueLength(): number {
    return this.inFlight + this.store.pendingCount();
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
    this.setCarry(region, next);
    await this.writer.call('setRegionCarry', region, next);
    const alert = rules.machines[id].record;
    this.hub.send(region, { type: 'alert', alert });
    return alert;
  }

  status(region: string): Record<string, unknown> {
    const c = this.carry(region);
    const intervals = c.budget.intervals;
    const sorted = [...intervals].sort((a, b) => a - b);
    const cadence = sorted.length ? sorted[sorted.length >> 1] : null;
    return {
      last_frame_time: isoOrNull(this.store.latestTime(region)),
      cadence_s: cadence,
      refusals: this.store.refusalCount(region),
      gaps: c.budget.gaps.length,
      queue: this.queueLength(),
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

  private async recordRefusal(region: string, r: { status: number; source: string; field: string; reason: string; frameTime?: number }): Promise<void> {
    const now = Date.now();
    await this.writer.call('recordRefusal', region, r, now);
    this.log(`refused (${region}, ${r.source}): ${r.reason}`);
    const row = this.store.region(region);
    if (!row) return;
    // The data-quality rule sees every refusal.
    const c = this.carry(region);
    const p = ruleParams(RULES.find((d) => d.id === 'refusals')!, row.settings.rules);
    const times = this.store.refusalTimes(region, now - Number(p.windowS) * 1000);
    const step = evaluateRules(c.rules, { time: now, refusalTimes: times }, { rules: row.settings.rules });
    const next = { ...c, rules: step.state };
    this.setCarry(region, next);
    await this.writer.call('setRegionCarry', region, next);
    for (const ch of step.changes) this.announceAlert(region, ch.alert, ch.change, row.settings);
    this.hub.send(region, { type: 'status', status: this.status(region) });
  }

  private async orderAndStore(v: Validated): Promise<void> {
    const { arrival, resolve } = v;
    const name = arrival.region;
    try {
      if (v.refusal) return resolve(await this.refusalAnswer(name, v.refusal.status, v.refusal.error, arrival.source));
      const { meta: frame, hash, bytes } = v.intake!;
      let region = this.store.region(name);
      if (!region) {
        if (!arrival.mayCreate) {
          return resolve(await this.refusalAnswer(name, 404, new InputError(arrival.source, 'region', `no region named "${name}"; it is created on the first frame sent with the token`), arrival.source, frame.time));
        }
        region = await this.writer.call('createRegion', name);
        this.log(`region ${name} created`);
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
      await writeFileAtomic(join(this.store.dataDir, file), bytes);
      const id = await this.writer.call('insertFrame', {
        region: name, time: frame.time, hash, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy,
        source: arrival.source, received: Date.now(), file,
      });
      resolve({ status: 201, body: { status: 'stored', frame_id: id, time: new Date(frame.time).toISOString() } });
      this.work$.next(name);
    } catch (e) {
      this.log(`storing a frame for ${name} failed: ${(e as Error).stack ?? e}`);
      resolve({ status: 500, body: { error: 'the frame could not be stored', field: '(server)', problem: String((e as Error).message ?? e) } });
    }
  }

  // Stages 3-8: pair, compute, accumulate, evaluate, store, broadcast -----------------------

  /** Frames to process in time order, after rewinding the region when one came in late. */
  private async takePending(region: string): Promise<FrameRow[]> {
    const pending = this.store.unprocessed(region);
    if (pending.length === 0) return [];
    const last = this.store.lastProcessed(region);
    if (last && pending[0].time < last.time) {
      const before = this.store.lastProcessed(region, pending[0].time);
      const restored = before ? this.store.frameCarry(before.id) ?? emptyCarry() : emptyCarry();
      const current = this.carry(region);
      // Keep what happened outside the frame stream: refusal alerts and acknowledgements.
      const machines = { ...restored.rules.machines };
      if (current.rules.machines.refusals) machines.refusals = current.rules.machines.refusals;
      for (const [id, m] of Object.entries(machines)) {
        const now = current.rules.machines[id];
        if (now && now.record.state === m.record.state && now.record.acknowledged) machines[id] = { ...m, record: { ...m.record, acknowledged: true } };
      }
      const carry: Carry = { ...restored, rules: { ...restored.rules, machines } };
      this.setCarry(region, carry);
      const n = await this.writer.call('rewind', region, before?.time ?? Number.MIN_SAFE_INTEGER, carry);
      this.pool.forget(region);
      this.log(`${region}: a frame came in late; ${n} later frame(s) are processed again in order`);
      return this.store.unprocessed(region).map((f) => ({ ...f, rewound: true }) as FrameRow);
    }
    return pending;
  }

  private processPending$(region: string): Observable<unknown> {
    let rewound = false;
    return defer(() => {
      this.activeWork++;
      return from(this.takePending(region));
    }).pipe(
      mergeMap((frames) => {
        rewound = frames.some((f) => (f as FrameRow & { rewound?: boolean }).rewound);
        return from(frames);
      }),
      // One frame at a time through the stages, so each is paired with a committed predecessor;
      // on shutdown the rest stays pending for the restart.
      concatMap((frame) => defer(() => (this.closed ? EMPTY : of(frame))).pipe(
        // pair: with the last frame processed before it
        map((f) => ({ frame: f, previous: this.store.lastGood(region, f.time) })),
        // compute in a worker
        concatMap(({ frame: f, previous }) => from(this.compute(region, f, previous))),
        // accumulate the budget
        map((a) => this.accumulate(region, a)),
        // evaluate the rules
        map((a) => this.evaluate(region, a)),
        // store
        concatMap((a) => from(this.commit(region, a).then(() => a))),
        // broadcast
        tap((a) => this.broadcast(region, a)),
      )),
      catchError((e) => { this.log(`${region}: processing stopped: ${(e as Error).stack ?? e}`); return EMPTY; }),
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
    let reply: WorkerReply;
    try {
      reply = await this.pool.analyse({
        region, frameId: frame.id, framePath: abs(frame.file),
        ...(previous && { previous: { id: previous.id, path: abs(previous.file) } }),
        settings: settings?.analysis ?? {}, mapsPath: abs(mapsFile),
      });
    } catch (e) {
      // A worker that died: once more on its replacement, then the frame is marked failed.
      try {
        reply = await this.pool.analyse({
          region, frameId: frame.id, framePath: abs(frame.file),
          ...(previous && { previous: { id: previous.id, path: abs(previous.file) } }),
          settings: settings?.analysis ?? {}, mapsPath: abs(mapsFile),
        });
      } catch (e2) {
        reply = { id: 0, ok: false, error: { source: frame.source, field: '(analysis)', problem: String((e2 as Error).message ?? e), message: String(e2) } };
      }
    }
    const a: Analysed = { frame, reply, carry: this.carry(region), changes: [] };
    if (!reply.ok) a.failure = { field: reply.error.field, problem: reply.error.problem };
    else if (reply.sample) a.sample = reply.sample;
    return a;
  }

  private accumulate(region: string, a: Analysed): Analysed {
    a.carry = this.carry(region);
    if (!a.sample) return a;
    const settings = this.store.region(region)?.settings;
    try {
      const r = accumulateBudget(a.carry.budget, a.sample, settings?.budget);
      a.point = r.point;
      a.row = seriesRow(a.sample, r.point, a.frame.id);
      a.carry = { ...a.carry, budget: r.state };
    } catch (e) {
      a.failure = { field: 'time', problem: (e as Error).message };
      a.sample = undefined;
    }
    return a;
  }

  private evaluate(region: string, a: Analysed): Analysed {
    if (!a.sample || !a.point) return a;
    const settings = this.store.region(region)?.settings;
    const step = evaluateRules(a.carry.rules, {
      time: a.sample.time, rate: a.sample.total, sigmaRate: a.sample.sigmaTotal,
      budget: a.point.values.total, sigmaBudget: a.point.sigmaTotal,
      ...(a.point.gap && { gap: a.point.gap }),
    }, { rules: settings?.rules ?? {} });
    a.carry = { ...a.carry, rules: step.state };
    a.changes = [...step.changes];
    return a;
  }

  private async commit(region: string, a: Analysed): Promise<void> {
    const reply = a.reply;
    // In memory first (synchronously after the rules), so that an acknowledgement or a refusal
    // arriving while the write is under way builds on this state, and its own write comes after.
    this.setCarry(region, a.carry);
    await this.writer.call('commitProcessed', {
      region, frameId: a.frame.id, processed: a.failure ? 2 : 1, carry: a.carry,
      ...(a.row && a.sample && { row: a.row, sampleTime: a.sample.time }),
      ...(reply.ok && reply.mapsWritten && { mapsFile: join('maps', region, `${a.frame.id}.hlcm`) }),
      ...(reply.ok && reply.waiting !== undefined && { waiting: reply.waiting }),
      ...(a.failure && { waiting: `analysis failed: ${a.failure.problem}` }),
      ...(reply.ok && reply.footpoints !== undefined && { footpoints: reply.footpoints }),
      ...(reply.ok && reply.events !== undefined && { events: reply.events }),
    });
    if (a.failure) {
      await this.recordRefusal(region, {
        status: 422, source: a.frame.source, field: a.failure.field,
        reason: `frame ${a.frame.id} (${new Date(a.frame.time).toISOString()}) was stored but its analysis failed: ${a.failure.problem}`,
        frameTime: a.frame.time,
      });
    }
  }

  private broadcast(region: string, a: Analysed): void {
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
