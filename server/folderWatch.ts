// The watched folder of a region: <data>/inbox/<region>/. Files that land there are taken in the
// order of their frames' times, not in the order the file system reports them:
//   - events are gathered until the folder has been quiet for a moment (a burst of files renamed
//     in at once is one batch; chokidar also waits until each file's size is stable);
//   - each file of the batch is read once to learn its frame's time (in the intake worker), then
//     the batch goes into the pipeline in time order, each frame held until the region's queue
//     has room;
//   - a file that cannot be read yet and was written only moments ago (a copy paused half-way)
//     is looked at again after a grace period before it counts as bad;
//   - a file the pipeline refuses (too late, another grid, not a frame, a link) is moved to
//     <inbox>/refused/ - still visible, to be moved back for a retry - and its refusal is
//     recorded with the reason; one that could not be stored (a full disk) stays and is tried again.
// Events can be missed (files that land while the watcher starts, an overflowing event queue), so
// the folder is also listed once the watcher is ready and every few seconds after.
// Files already taken (same path, size and mtime) are skipped at restart; a kill at any moment
// leaves every file either stored (a resend is a duplicate) or still in the inbox. Links are not
// followed, special files (folders, pipes) are left alone, and only the folder the server made
// from a checked region name is watched: nothing from a request names a path.
// The inbox itself is watched too (and listed as often): a new folder with a region name becomes
// that region (with a log line), its files then taken as above; a folder whose name is not a
// region name is left alone with a log line. A region being removed or renamed has its folder put
// on hold (`hold`, `release`): not watched, never turned back into a region meanwhile.
import { watch } from 'chokidar';
import type { FSWatcher } from 'chokidar';
import { existsSync, mkdirSync } from 'node:fs';
import { lstat, mkdir, readdir, rename } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import type { IntakePool } from './intakePool.js';
import { IntakeRefusal } from './intakePool.js';
import type { Pipeline } from './pipeline.js';
import { checkRegionName } from './regionName.js';
import type { Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';

export interface FolderWatchOptions {
  /** A batch is taken once no event came for this long, ms. Default 300. */
  readonly quietMs?: number;
  /** A file that cannot be read and changed less than this long ago is looked at again later, ms. Default 5000. */
  readonly graceMs?: number;
  /** The folder is listed this often as well, in case an event was missed, ms. Default 10000. */
  readonly rescanMs?: number;
}

/** The subfolder refused files are moved to. */
export const REFUSED_FOLDER = 'refused';

interface Watched {
  readonly watcher: FSWatcher;
  /** Paths waiting for the next batch. */
  readonly queue: Set<string>;
  timer?: ReturnType<typeof setTimeout>;
  draining?: Promise<void>;
  again: boolean;
  readonly later: Set<ReturnType<typeof setTimeout>>;
  rescan?: ReturnType<typeof setInterval>;
}

interface Candidate { path: string; size: number; mtime: number; time: number }

export class FolderWatch {
  private readonly watched = new Map<string, Watched>();
  /** Regions whose folders are on hold (being moved or removed), with how many holds each. */
  private readonly held = new Map<string, number>();
  /** Folder names under the inbox that are not region names (logged once each). */
  private readonly badNames = new Set<string>();
  private inbox?: { watcher: FSWatcher; scan: ReturnType<typeof setInterval> };
  private readonly quietMs: number;
  private readonly graceMs: number;
  private readonly rescanMs: number;
  private closed = false;

  constructor(
    private readonly store: Store, private readonly writer: StoreWriter, private readonly pipeline: Pipeline,
    private readonly intake: IntakePool, private readonly log: (line: string) => void, options: FolderWatchOptions = {},
  ) {
    this.quietMs = options.quietMs ?? 300;
    this.graceMs = options.graceMs ?? 5000;
    this.rescanMs = options.rescanMs ?? 10_000;
  }

  folderOf(region: string): string {
    return join(this.store.dataDir, 'inbox', region);
  }

  /** True when the inbox has a folder (or anything) of this name. */
  folderExists(region: string): boolean {
    return existsSync(this.folderOf(region));
  }

  /** Starts (or stops) watching a region's folder as its settings say (not while it is on hold). */
  sync(region: string, wanted: boolean): void {
    if (this.closed || this.held.has(region)) return;
    const have = this.watched.get(region);
    if (wanted && !have) this.start(region);
    if (!wanted && have) this.stop(region, have);
  }

  private start(region: string): void {
    const dir = this.folderOf(region);
    mkdirSync(dir, { recursive: true, mode: 0o700 });
    const watcher = watch(dir, {
      depth: 0,
      ignoreInitial: false,
      followSymlinks: false,
      ignored: (path: string) => basename(path).startsWith('.') || /\.(tmp|part)$/i.test(path),
      awaitWriteFinish: { stabilityThreshold: 200, pollInterval: 50 },
    });
    const w: Watched = { watcher, queue: new Set(), again: false, later: new Set() };
    const enqueue = (path: string) => { w.queue.add(path); this.schedule(region, w, this.quietMs); };
    watcher.on('add', enqueue);
    watcher.on('change', enqueue);
    watcher.on('unlink', (path) => w.queue.delete(path));
    watcher.on('error', (e) => this.log(`watching ${dir}: ${(e as Error).message}`));
    watcher.once('ready', () => {
      void this.rescan(region, w);
      w.rescan = setInterval(() => void this.rescan(region, w), this.rescanMs);
      w.rescan.unref();
    });
    this.watched.set(region, w);
  }

  /** Lists the folder and queues every file not taken yet (one that changed within a second, a second later). */
  private async rescan(region: string, w: Watched): Promise<void> {
    if (this.closed || this.watched.get(region) !== w) return;
    try {
      const dir = this.folderOf(region);
      let added = 0;
      for (const e of await readdir(dir, { withFileTypes: true })) {
        if (e.name.startsWith('.') || /\.(tmp|part)$/i.test(e.name) || (!e.isFile() && !e.isSymbolicLink())) continue;
        const path = join(dir, e.name);
        if (w.queue.has(path)) continue;
        let st;
        try { st = await lstat(path); } catch { continue; }
        if (this.store.watchedFileSeen(region, path, st.size, Math.round(st.mtimeMs))) continue;
        // Changed within the last second: perhaps still being written; looked at again in a second.
        if (Date.now() - st.mtimeMs < 1000) { this.retryLater(region, w, path, 1000); continue; }
        w.queue.add(path);
        added++;
      }
      if (added > 0) this.schedule(region, w, this.quietMs);
    } catch (e) {
      this.log(`listing the watched folder of ${region}: ${(e as Error).message}`);
    }
  }

  /**
   * Puts the regions' folders on hold: their watchers stop (a batch being taken ends after the
   * file under way, which this waits for) and the inbox scan does not turn them into regions.
   */
  async hold(regions: readonly string[]): Promise<void> {
    const drains: Promise<void>[] = [];
    for (const r of new Set(regions)) {
      this.held.set(r, (this.held.get(r) ?? 0) + 1);
      const w = this.watched.get(r);
      if (!w) continue;
      if (w.draining) drains.push(w.draining);
      this.stop(r, w);
    }
    await Promise.all(drains);
  }

  /** Ends a hold: each region that exists is watched again as its settings say. */
  release(regions: readonly string[]): void {
    for (const r of new Set(regions)) {
      const n = (this.held.get(r) ?? 1) - 1;
      if (n > 0) { this.held.set(r, n); continue; }
      this.held.delete(r);
      const row = this.store.region(r);
      if (row) this.sync(r, row.settings.watchFolder);
    }
  }

  /** Watches the inbox for new folders (and lists it now and every `rescanMs`). */
  watchInbox(): void {
    const root = join(this.store.dataDir, 'inbox');
    mkdirSync(root, { recursive: true, mode: 0o700 });
    const watcher = watch(root, {
      depth: 0, ignoreInitial: true, followSymlinks: false,
      ignored: (path: string) => path !== root && basename(path).startsWith('.'),
    });
    watcher.on('addDir', (path) => { if (dirname(path) === root) void this.folderFound(basename(path)); });
    watcher.on('error', (e) => this.log(`watching ${root}: ${(e as Error).message}`));
    const scan = setInterval(() => void this.scanInbox(), this.rescanMs);
    scan.unref();
    this.inbox = { watcher, scan };
    void this.scanInbox();
  }

  private async scanInbox(): Promise<void> {
    if (this.closed) return;
    try {
      for (const e of await readdir(join(this.store.dataDir, 'inbox'), { withFileTypes: true })) {
        if (e.isDirectory() && !e.name.startsWith('.')) await this.folderFound(e.name);
      }
    } catch (e) {
      this.log(`listing the inbox: ${(e as Error).message}`);
    }
  }

  /** A folder under the inbox: the region of that name is made (when none) and its folder watched. */
  private async folderFound(name: string): Promise<void> {
    if (this.closed || this.held.has(name) || this.watched.has(name)) return;
    const row = this.store.region(name);
    if (row) return this.sync(name, row.settings.watchFolder);
    try {
      checkRegionName(name, 'inbox');
    } catch {
      if (!this.badNames.has(name)) {
        this.badNames.add(name);
        this.log(`inbox: the folder "${name.slice(0, 80)}" is not a region name (1 to 64 of A-Z a-z 0-9 _ -); left alone`);
      }
      return;
    }
    try {
      const dir = this.folderOf(name);
      const made = await this.pipeline.createRegionFor(name, async () => {
        if (this.closed || this.held.has(name)) return false;
        try { return (await lstat(dir)).isDirectory(); } catch { return false; }
      });
      if (!made) return;
      this.log(`region ${name} created for its new inbox folder inbox/${name}`);
      const created = this.store.region(name);
      if (created) this.sync(name, created.settings.watchFolder);
    } catch (e) {
      this.log(`inbox: the region for the folder ${name} could not be created: ${(e as Error).message}`);
    }
  }

  private stop(region: string, w: Watched): void {
    if (w.timer) clearTimeout(w.timer);
    if (w.rescan) clearInterval(w.rescan);
    for (const t of w.later) clearTimeout(t);
    void w.watcher.close().catch(() => undefined);
    this.watched.delete(region);
  }

  /** A drain of the region's batch after `ms` of quiet (each event pushes it back). */
  private schedule(region: string, w: Watched, ms: number): void {
    if (this.closed || this.watched.get(region) !== w) return;
    if (w.timer) clearTimeout(w.timer);
    w.timer = setTimeout(() => { w.timer = undefined; this.drain(region, w); }, ms);
    w.timer.unref();
  }

  /** Looks at `path` again after `ms` (a file still being written, or waiting for disk space). */
  private retryLater(region: string, w: Watched, path: string, ms: number): void {
    const t = setTimeout(() => { w.later.delete(t); w.queue.add(path); this.schedule(region, w, 0); }, ms);
    t.unref();
    w.later.add(t);
  }

  private drain(region: string, w: Watched): void {
    if (w.draining) { w.again = true; return; }
    w.draining = this.takeBatch(region, w)
      .catch((e: unknown) => this.log(`watched folder of ${region}: ${(e as Error).stack ?? e}`))
      .finally(() => {
        w.draining = undefined;
        if (w.again || w.queue.size > 0) { w.again = false; this.schedule(region, w, 0); }
      });
  }

  private async takeBatch(region: string, w: Watched): Promise<void> {
    const batch = [...w.queue];
    w.queue.clear();
    const good: Candidate[] = [];
    const bad: Omit<Candidate, 'time'>[] = [];
    const settings = () => this.store.region(region)?.settings.components ?? {};
    const gone = () => this.closed || this.watched.get(region) !== w;
    for (const path of batch) {
      if (gone()) return;
      let st;
      try { st = await lstat(path); } catch { continue; } // gone already
      if (!st.isFile() && !st.isSymbolicLink()) {
        this.log(`watched folder of ${region}: ${basename(path)} is not a file; left alone`);
        continue;
      }
      const size = st.size, mtime = Math.round(st.mtimeMs);
      if (this.store.watchedFileSeen(region, path, size, mtime)) continue;
      // Read once for the frame's time (nothing stored, nothing recorded).
      try {
        const peek = await this.intake.take({ kind: 'file', path, source: this.sourceOf(region, path), settings: settings(), peek: true });
        good.push({ path, size, mtime, time: peek.meta.time });
      } catch (e) {
        if (!(e instanceof IntakeRefusal) || e.status >= 500) { this.retryLater(region, w, path, 5000); continue; }
        // Written moments ago: perhaps still being written (a copy that paused). Look again later.
        if (Date.now() - st.mtimeMs < this.graceMs) this.retryLater(region, w, path, this.graceMs);
        else bad.push({ path, size, mtime });
      }
    }
    good.sort((a, b) => a.time - b.time || (a.path < b.path ? -1 : 1));
    // In time order; the files that are not frames after them (each refused with its reason).
    for (const c of [...good, ...bad]) {
      if (gone()) return;
      await this.pipeline.waitForRoom(region, gone);
      if (gone()) return;
      await this.takeFile(region, w, c.path, c.size, c.mtime);
    }
  }

  private sourceOf(region: string, path: string): string {
    return `inbox/${region}/${basename(path)}`;
  }

  private async takeFile(region: string, w: Watched, path: string, size: number, mtime: number): Promise<void> {
    // Changed since it was looked at: it comes back with its change event.
    try {
      const st = await lstat(path);
      if (st.size !== size || Math.round(st.mtimeMs) !== mtime) return;
    } catch { return; }
    const answer = await this.pipeline.ingest({ region, payload: { kind: 'file', path }, source: this.sourceOf(region, path), mayCreate: true });
    if (answer.status < 300) {
      await this.writer.call('markWatchedFile', region, path, size, mtime).catch((e: unknown) => {
        // A resend after a restart is a duplicate: nothing is lost when this mark is.
        this.log(`watched folder of ${region}: ${basename(path)} stored, but marking it taken failed: ${(e as Error).message}`);
      });
    } else if (answer.status >= 500) {
      // Not stored (a full disk, a shutdown): it stays in the inbox and is tried again.
      if (!this.closed) this.retryLater(region, w, path, 1000 * ('retryAfterS' in answer && answer.retryAfterS ? Math.min(answer.retryAfterS, 30) : 5));
    } else {
      await this.moveToRefused(region, path, size, mtime);
    }
  }

  /** Moves a refused file (or link) to <inbox>/refused/, under a free name. */
  private async moveToRefused(region: string, path: string, size: number, mtime: number): Promise<void> {
    const dir = join(this.folderOf(region), REFUSED_FOLDER);
    try {
      await mkdir(dir, { recursive: true, mode: 0o700 });
      const name = basename(path);
      for (let i = 0; i < 1000; i++) {
        const target = join(dir, i === 0 ? name : `${name}.${i}`);
        try { await lstat(target); continue; } catch { /* free */ }
        await rename(path, target);
        this.log(`watched folder of ${region}: ${name} refused; moved to ${REFUSED_FOLDER}/${basename(target)} (reason in the region's refusals)`);
        return;
      }
      throw new Error('no free name');
    } catch (e) {
      this.log(`watched folder of ${region}: ${basename(path)} refused but could not be moved (${(e as Error).message}); left in place`);
      await this.writer.call('markWatchedFile', region, path, size, mtime).catch(() => undefined);
    }
  }

  async close(): Promise<void> {
    this.closed = true;
    if (this.inbox) {
      clearInterval(this.inbox.scan);
      await this.inbox.watcher.close().catch(() => undefined);
    }
    const drains = [...this.watched.values()].map((w) => w.draining).filter(Boolean);
    for (const [region, w] of this.watched) this.stop(region, w);
    await Promise.all(drains);
  }
}
