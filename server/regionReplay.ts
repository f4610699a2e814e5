// One feed of frames from a source into a region, through the same pipeline as live ingest:
// the demo region, an archive folder, or a region already in the store (replayed with other
// settings into a new region beside the original). Pacing is replay/pacedReplay.ts (on
// replay/pacing.ts); this file only adds what the server needs: where the frames come from, how
// they enter the pipeline, and the control of docs/api.md (pause, resume, seek, speed).
//
// Seek: seeking back re-sends frames the region already holds; the store recognises them as
// duplicates (counted once, nothing computed again) and play goes on from there into frames not
// yet sent. Seeking forward skips frames; the budget marks the hole as a gap when it is longer
// than its gap rule. A frame that is not stored and older than the region's newest frame by more
// than its lateness (after a forward seek, seeking back into the hole) is not sent: it would be
// refused as too late; it is counted in `skipped_late`.
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Frame } from '../core/frame.js';
import { InputError } from '../core/inputError.js';
import type { Archive } from '../replay/archiveSource.js';
import type { DemoRegion } from '../replay/demo/demoRegion.js';
import { demoRegion } from '../replay/demo/demoRegion.js';
import { indexAtTime } from '../replay/pacing.js';
import type { PacingClock } from '../replay/pacing.js';
import type { PacedReplay, ReplaySource } from '../replay/pacedReplay.js';
import { startReplay } from '../replay/pacedReplay.js';
import { decodeFrame } from './frameBlob.js';
import type { Pipeline } from './pipeline.js';
import type { Store } from './store.js';

/** The built-in demo region's name. */
export const DEMO_REGION = 'demo';

/** Where a feed's frames come from. */
export interface FeedSource extends ReplaySource<Frame> {
  /** For the status and the log: `demo`, `folder <path>`, `region <name>`. */
  readonly label: string;
  /** Archive ms per wall ms at speed 1: 1 for archives (real cadence); the demo plays faster. */
  readonly timeScale: number;
  /** The `source` recorded with frame i. */
  sourceOf(i: number): string;
}

/** The built-in demo region: one frame every `intervalMs` at speed 1 (its 12-min cadence compressed). */
export function demoSource(intervalMs = 2000, demo: DemoRegion = demoRegion({ withVelocity: true, withLabels: true })): FeedSource {
  const entries = Array.from({ length: demo.frameCount }, (_, i) => ({ time: demo.timeAt(i) }));
  return {
    label: 'demo', entries, timeScale: (demo.cadenceS * 1000) / intervalMs,
    frame: async (i) => demo.frameAt(i),
    sourceOf: () => 'demo',
  };
}

/** An archive folder opened by replay/archiveSource.ts (the same reading and order as `process`). */
export function folderSource(archive: Archive): FeedSource {
  return {
    label: `folder ${archive.folder}`, entries: archive.entries, timeScale: 1,
    frame: (i) => archive.frame(i),
    sourceOf: (i) => `replay:${archive.entries[i].file}`,
  };
}

/** The stored frames of a region (its frame files under the data folder), in time order. */
export function storedRegionSource(store: Store, region: string): FeedSource {
  const rows = store.framesInRange(region, Number.MIN_SAFE_INTEGER, Number.MAX_SAFE_INTEGER);
  if (rows.length === 0) throw new InputError('replay', 'from_region', `region "${region}" has no stored frames`);
  return {
    label: `region ${region}`, entries: rows, timeScale: 1,
    // Paths come from the store's own rows (region name checked, content hash), never a request.
    frame: async (i) => decodeFrame(await readFile(join(store.dataDir, rows[i].file)), rows[i].file),
    sourceOf: (i) => `replay:${region}#${rows[i].id}`,
  };
}

export interface FeedStatus {
  readonly state: 'playing' | 'paused' | 'done';
  /** The factor given (archive seconds per second of wall time; for the demo, its own scale). */
  readonly speed: number;
  /** Index of the next frame to send (total when done). */
  readonly position: number;
  readonly total: number;
  readonly source: string;
  /** Frames stored new, frames the region already had (re-sent after a seek back), frames not sent as too late. */
  readonly sent: number;
  readonly duplicates: number;
  readonly skipped_late: number;
}

export interface FeedOptions {
  readonly region: string;
  readonly source: FeedSource;
  readonly pipeline: Pipeline;
  readonly store: Store;
  /** Default 1. */
  readonly speed?: number;
  readonly log?: (line: string) => void;
  readonly clock?: PacingClock;
  /** Called when a run of the source is through. */
  readonly onEnd?: () => void;
}

type Answer = { status: number; body: unknown };

const bad = (problem: string, field = 'action'): Answer => ({ status: 400, body: { error: problem, field, problem } });

export class RegionReplay {
  readonly region: string;
  readonly source: FeedSource;
  private readonly log: (line: string) => void;
  private session: PacedReplay | undefined;
  private speed: number;
  private stopped = false;
  private sent = 0;
  private duplicates = 0;
  private skippedLate = 0;
  private current: Promise<void> = Promise.resolve();

  constructor(private readonly options: FeedOptions) {
    this.region = options.region;
    this.source = options.source;
    this.log = options.log ?? (() => undefined);
    this.speed = options.speed ?? 1;
    checkSpeed(this.speed);
  }

  /** Starts where the region's stored frames end (after a restart the feed goes on from there). */
  start(): void {
    const latest = this.options.store.latestTime(this.region);
    const times = this.source.entries.map((e) => e.time);
    const from = latest === undefined ? 0 : indexAtTime(times, latest + 1);
    this.log(`replay into "${this.region}" from ${this.source.label}: ${times.length} frames, from frame ${from}, speed ${this.speed}`);
    this.play(from, false);
  }

  private play(from: number, paused: boolean): void {
    const session = startReplay(this.source, this.speed * this.source.timeScale, (frame, i) => this.send(frame, i), {
      ...(this.options.clock && { clock: this.options.clock }), start: from,
    });
    if (paused) session.pause();
    this.session = session;
    this.current = session.done.then(
      () => {
        if (this.stopped || session !== this.session) return;
        this.log(`replay into "${this.region}" done: ${this.sent} frames stored, ${this.duplicates} already there, ${this.skippedLate} too late`);
        this.options.onEnd?.();
      },
      (e) => { this.log(`replay into "${this.region}" stopped: ${(e as Error).message}`); },
    );
  }

  private async send(frame: Frame, i: number): Promise<void> {
    const { pipeline, store } = this.options;
    const source = this.source.sourceOf(i);
    const region = store.region(this.region);
    const latest = store.latestTime(this.region);
    if (region && latest !== undefined && frame.time < latest - region.settings.latenessS * 1000 && !store.frameAtTime(this.region, frame.time)) {
      this.skippedLate++;
      return;
    }
    const a = await pipeline.ingest({ region: this.region, payload: { kind: 'frame', frame: { ...frame, provenance: { ...frame.provenance, source } } }, source, mayCreate: true });
    if (a.status === 201) this.sent++;
    else if (a.status === 200) this.duplicates++;
    else this.log(`replay into "${this.region}", frame ${i}: ${JSON.stringify(a.body)}`);
    // Keep at most one frame waiting behind the one computing: the pace never outruns the
    // pipeline (speed 0 is "as fast as the pipeline takes them"), and pause acts at once.
    while (!this.stopped && store.unprocessed(this.region).length > 1) await new Promise((r) => setTimeout(r, 20));
  }

  status(): FeedStatus {
    const s = this.session?.status();
    return {
      state: s?.state ?? 'paused', speed: this.speed, position: s?.position ?? 0, total: this.source.entries.length,
      source: this.source.label, sent: this.sent, duplicates: this.duplicates, skipped_late: this.skippedLate,
    };
  }

  /** The replay control of docs/api.md: `{ action: 'pause'|'resume'|'seek'|'speed', value? }`. */
  control(body: unknown): Answer {
    const b = (body ?? {}) as { action?: unknown; value?: unknown };
    const session = this.session;
    if (!session) return { status: 409, body: { error: 'the replay has not started', field: 'action', problem: 'not started' } };
    switch (b.action) {
      case 'pause': session.pause(); break;
      case 'resume': session.resume(); break;
      case 'speed': {
        const v = typeof b.value === 'number' ? b.value : typeof b.value === 'string' && b.value.trim() !== '' ? Number(b.value) : NaN;
        if (!Number.isFinite(v) || v < 0) return bad('speed must be a factor >= 0 (0 = as fast as possible)', 'value');
        this.speed = v;
        session.setSpeed(v * this.source.timeScale);
        break;
      }
      case 'seek': {
        const total = this.source.entries.length;
        let index: number;
        if (typeof b.value === 'number') {
          if (!Number.isInteger(b.value) || b.value < 0 || b.value >= total) return bad(`seek: frame index must be an integer in 0..${total - 1}`, 'value');
          index = b.value;
        } else if (typeof b.value === 'string' && /^\d{4}-\d{2}-\d{2}T/.test(b.value) && Number.isFinite(Date.parse(b.value))) {
          index = indexAtTime(this.source.entries.map((e) => e.time), Date.parse(b.value));
          if (index >= total) return bad(`seek: ${b.value} is after the last frame (${new Date(this.source.entries[total - 1].time).toISOString()})`, 'value');
        } else {
          return bad('seek needs a frame index or an ISO 8601 time', 'value');
        }
        const st = session.status();
        if (st.state === 'done') {
          // The archive was through: play again from there.
          this.play(index, false);
        } else {
          session.seek(index);
        }
        break;
      }
      default:
        return bad(`action must be pause, resume, seek or speed, got ${JSON.stringify(b.action)}`);
    }
    return { status: 200, body: { replay: this.status() } };
  }

  /** Resolves when the current run of the archive is through (or stopped). */
  get done(): Promise<void> {
    return this.current;
  }

  async stop(): Promise<void> {
    this.stopped = true;
    this.session?.stop();
    await this.current;
  }
}

function checkSpeed(speed: number): void {
  if (!Number.isFinite(speed) || speed < 0) throw new InputError('replay', 'speed', `must be 0 (as fast as possible) or a positive factor, got ${speed}`);
}
