// The monitor's replays, by region: the demo, the replays `helicord replay` starts, and those
// started through `POST /api/regions/:region/replay { action: 'start', ... }`. A request may only
// name a stored region, or a folder under the root the operator gave on the command line
// (`--replay-root`); the folder is resolved and must stay inside that root, symbolic links
// included, and so must every file read from it (a link in the folder that leads out of the root
// is skipped with the reason). No other path from a request reaches the file system.
import { realpath } from 'node:fs/promises';
import { isAbsolute, relative, resolve, sep } from 'node:path';
import { InputError } from '../core/inputError.js';
import type { Archive } from '../replay/archiveSource.js';
import { openArchive } from '../replay/archiveSource.js';
import type { PacingClock } from '../replay/pacing.js';
import type { Pipeline } from './pipeline.js';
import { checkRegionName } from './regionName.js';
import { DEFAULT_SETTINGS, mergeSettings } from './regionSettings.js';
import type { Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';
import type { FeedSource } from './regionReplay.js';
import { RegionReplay, demoSource, folderSource, storedRegionSource } from './regionReplay.js';

/** A replay to start: into `region`, from an opened archive folder or from a stored region. */
export interface ReplayStart {
  readonly region: string;
  readonly from: { readonly archive: Archive } | { readonly region: string };
  /** Default 1 (the archive's own cadence); 0 = as fast as the pipeline takes them. */
  readonly speed?: number;
  /** Settings for the new region (a partial region settings object, as for PUT .../settings). */
  readonly settings?: unknown;
}

export interface ReplayRegistryOptions {
  readonly store: Store;
  readonly writer: StoreWriter;
  readonly pipeline: Pipeline;
  readonly log: (line: string) => void;
  /** Folder under which API requests may start folder replays; none = only stored regions. */
  readonly replayRoot?: string;
  /** Called after a replay gave a region its settings (the watched folder follows them). */
  readonly onSettings?: (region: string) => void;
  /** Called when a replay's state changed outside the frame flow (a control, the end): viewers are told. */
  readonly onChange?: (region: string) => void;
  readonly clock?: PacingClock;
}

type Answer = { status: number; body: unknown };
const refusal = (status: number, field: string, problem: string): Answer => ({ status, body: { error: problem, field, problem } });

export class ReplayRegistry {
  private readonly feeds = new Map<string, RegionReplay>();

  constructor(private readonly options: ReplayRegistryOptions) {}

  status(region: string): ReturnType<RegionReplay['status']> | null {
    return this.feeds.get(region)?.status() ?? null;
  }

  feed(region: string): RegionReplay | undefined {
    return this.feeds.get(region);
  }

  /**
   * What keeps a region from being renamed or reset (or its frames from being moved): a replay
   * not done that feeds it or reads from it, described; undefined when there is none.
   */
  busyWith(region: string): { into: boolean; what: string } | undefined {
    for (const [into, feed] of this.feeds) {
      const s = feed.status();
      if (s.state === 'done') continue;
      if (into === region) return { into: true, what: `a replay (${s.state}, from ${s.source}) feeds region ${region}` };
      if (feed.source.label === `region ${region}`) return { into: false, what: `region ${region} is being replayed into region ${into}` };
    }
    return undefined;
  }

  /** Stops the replay into `region`, if any, and forgets it (the region goes or changes name). */
  async end(region: string): Promise<void> {
    const feed = this.feeds.get(region);
    if (!feed) return;
    this.feeds.delete(region);
    await feed.stop();
  }

  /** The demo region, fed from replay/demo. */
  startDemo(region: string, intervalMs: number): RegionReplay {
    return this.launch(region, demoSource(intervalMs), 1);
  }

  /** Starts a replay (the command line's, or one asked for through the API). Throws InputError. */
  async start(spec: ReplayStart): Promise<RegionReplay> {
    const { store, writer } = this.options;
    const region = checkRegionName(spec.region, 'region');
    const running = this.feeds.get(region);
    if (running && running.status().state !== 'done') throw new InputError('replay', 'region', `region "${region}" is already being replayed into`);
    let source: FeedSource;
    if ('archive' in spec.from) {
      if (spec.from.archive.entries.length === 0) throw new InputError(spec.from.archive.folder, '(folder)', 'holds no usable frame');
      source = folderSource(spec.from.archive);
    } else {
      const from = spec.from.region;
      try { checkRegionName(from, 'replay'); } catch (e) { throw new InputError('replay', 'from_region', (e as InputError).problem); }
      if (from === region) throw new InputError('replay', 'from_region', 'must differ from the region replayed into (the original stays untouched)');
      if (!store.region(from)) throw new InputError('replay', 'from_region', `no region named "${from}"`);
      source = storedRegionSource(store, from);
    }
    if (spec.settings !== undefined) {
      const existing = store.region(region);
      if (existing && store.frameCount(region) > 0) {
        throw new InputError('replay', 'settings', `region "${region}" already has frames; settings are given to a new region (pick another name)`);
      }
      // Checked before the region is made, so that bad settings leave nothing behind.
      const settings = mergeSettings(existing?.settings ?? DEFAULT_SETTINGS, spec.settings);
      if (!existing) await writer.call('createRegion', region);
      await writer.call('saveSettings', region, settings);
      this.options.onSettings?.(region);
    }
    return this.launch(region, source, spec.speed ?? 1);
  }

  /**
   * `POST /api/regions/:region/replay`: `start` begins a replay into the region, the other
   * actions steer the region's running replay.
   */
  async control(region: string, body: unknown): Promise<Answer> {
    const b = (body ?? {}) as Record<string, unknown>;
    if (b.action === 'start') return this.startFromRequest(region, b);
    const feed = this.feeds.get(region);
    if (!feed) return refusal(409, 'region', `region ${region} is not a replay (start one with { action: 'start', from_region })`);
    const answer = feed.control(body);
    if (answer.status === 200) this.options.onChange?.(region);
    return answer;
  }

  private async startFromRequest(region: string, b: Record<string, unknown>): Promise<Answer> {
    try {
      for (const k of Object.keys(b)) {
        if (!['action', 'from_region', 'folder', 'speed', 'settings'].includes(k)) throw new InputError('replay', k, 'is not a field of a replay start (from_region or folder, speed, settings)');
      }
      if ((b.from_region === undefined) === (b.folder === undefined)) throw new InputError('replay', 'from_region', 'give exactly one of from_region (a stored region) and folder (under the replay root)');
      // A request starts a replay into a new region only (the command line may resume one).
      if (this.options.store.frameCount(region) > 0) throw new InputError('replay', 'region', `region "${region}" already has frames; replay into a new region`);
      const speed = b.speed === undefined ? 1 : b.speed;
      if (typeof speed !== 'number' || !Number.isFinite(speed) || speed < 0) throw new InputError('replay', 'speed', 'must be a factor >= 0 (0 = as fast as possible)');
      let from: ReplayStart['from'];
      if (b.from_region !== undefined) {
        if (typeof b.from_region !== 'string') throw new InputError('replay', 'from_region', 'must be a region name');
        from = { region: b.from_region };
      } else {
        // Files inside are read only when they stay inside the root too (links not followed out).
        from = { archive: await openArchive(await this.folderUnderRoot(b.folder), { within: this.options.replayRoot! }) };
      }
      const feed = await this.start({ region, from, speed, ...(b.settings !== undefined && { settings: b.settings }) });
      return { status: 201, body: { replay: feed.status() } };
    } catch (e) {
      if (!(e instanceof InputError)) throw e;
      const status = e.field === 'region' ? 409 : e.field === 'from_region' && /no region named/.test(e.problem) ? 404 : 400;
      return refusal(status, e.field, e.problem);
    }
  }

  /** A folder from a request: relative, inside the replay root once resolved (links followed). */
  private async folderUnderRoot(folder: unknown): Promise<string> {
    const root = this.options.replayRoot;
    if (root === undefined) throw new InputError('replay', 'folder', 'folder replays through the API are off; the operator enables them with --replay-root DIR (stored regions can be replayed with from_region)');
    if (typeof folder !== 'string' || folder === '' || folder.length > 1024 || folder.includes('\0') || isAbsolute(folder)) {
      throw new InputError('replay', 'folder', 'must be a path relative to the replay root');
    }
    const inside = (base: string, p: string) => { const r = relative(base, p); return r === '' || (!r.startsWith('..' + sep) && r !== '..' && !isAbsolute(r)); };
    const rootReal = await realpath(resolve(root));
    const wanted = resolve(rootReal, folder);
    if (!inside(rootReal, wanted)) throw new InputError('replay', 'folder', 'must stay inside the replay root');
    let real: string;
    try {
      real = await realpath(wanted);
    } catch {
      throw new InputError('replay', 'folder', 'no such folder under the replay root');
    }
    if (!inside(rootReal, real)) throw new InputError('replay', 'folder', 'must stay inside the replay root');
    return real;
  }

  private launch(region: string, source: FeedSource, speed: number): RegionReplay {
    const { store, pipeline, log } = this.options;
    const feed = new RegionReplay({
      region, source, pipeline, store, speed, log, ...(this.options.clock && { clock: this.options.clock }),
      onEnd: () => this.options.onChange?.(region),
    });
    this.feeds.set(region, feed);
    feed.start();
    return feed;
  }

  async close(): Promise<void> {
    await Promise.all([...this.feeds.values()].map((f) => f.stop()));
  }
}
