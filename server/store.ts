// The durable store: SQLite (better-sqlite3 12) in WAL mode with synchronous=FULL, so that a
// commit is on disk (WAL fsynced) before we acknowledge a frame: an acknowledgement promises the
// frame survives a crash or a power cut, which NORMAL does not (it may lose the last commits on
// power loss). The cost is one fsync per commit, small next to a frame's computation.
// Frames' maps live as files beside the database (written atomically), referenced by path
// relative to the data folder.
import Database from 'better-sqlite3';
import { chmodSync, closeSync, existsSync, openSync } from 'node:fs';
import { join } from 'node:path';
import type { BudgetState } from '../core/budget.js';
import { emptyBudget } from '../core/budget.js';
import type { RulesState } from '../core/alerts/evaluateRules.js';
import { emptyRules } from '../core/alerts/evaluateRules.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import { fromSafeJson, toSafeJson } from './jsonSafe.js';
import type { RegionSettings } from './regionSettings.js';
import { DEFAULT_SETTINGS } from './regionSettings.js';

// What the pipeline carries from one processed frame to the next is core's AccumulationState
// (core/accumulate.ts), stored with each frame (column `carry`) and with the region (`state`).
import type { AccumulationState } from '../core/accumulate.js';
import { emptyAccumulation } from '../core/accumulate.js';
export type { AccumulationState };
export { emptyAccumulation };

export interface RegionRow {
  readonly name: string;
  readonly created: number;
  readonly settings: RegionSettings;
  readonly duplicates: number;
}

export interface FrameRow {
  readonly id: number;
  readonly region: string;
  readonly time: number;
  readonly hash: string;
  readonly nx: number;
  readonly ny: number;
  readonly dx: number;
  readonly dy: number;
  readonly source: string;
  readonly received: number;
  /** Path of the frame's map file, relative to the data folder. */
  readonly file: string;
  /** 0 stored, 1 processed, 2 failed in analysis. */
  readonly processed: number;
  readonly mapsFile: string | null;
  readonly waiting: string | null;
}

/**
 * File work left to do after a region was removed, renamed or reset: written in the same
 * transaction as the change of the rows, done right after it (server/regionFiles.ts) and again at
 * start when a crash came in between, then deleted.
 */
export interface RegionChore {
  readonly id: number;
  readonly kind: 'remove' | 'rename' | 'reset';
  readonly name: string;
  /** The new name (rename). */
  readonly target: string | null;
}

export interface RefusalRow {
  readonly time_received: string;
  readonly source: string;
  readonly reason: string;
  readonly field: string;
  readonly status: number;
  readonly frame_time: string | null;
}

const SCHEMA = `
CREATE TABLE IF NOT EXISTS regions (
  name TEXT PRIMARY KEY, created INTEGER NOT NULL, settings TEXT NOT NULL,
  state TEXT, duplicates INTEGER NOT NULL DEFAULT 0);
CREATE TABLE IF NOT EXISTS frames (
  id INTEGER PRIMARY KEY AUTOINCREMENT, region TEXT NOT NULL, time INTEGER NOT NULL, hash TEXT NOT NULL,
  nx INTEGER NOT NULL, ny INTEGER NOT NULL, dx REAL NOT NULL, dy REAL NOT NULL,
  source TEXT NOT NULL, received INTEGER NOT NULL, file TEXT NOT NULL,
  processed INTEGER NOT NULL DEFAULT 0, carry TEXT, maps_file TEXT, waiting TEXT,
  footpoints TEXT, events TEXT,
  UNIQUE (region, hash));
CREATE INDEX IF NOT EXISTS frames_by_time ON frames (region, time);
CREATE INDEX IF NOT EXISTS frames_pending ON frames (region, time) WHERE processed = 0;
CREATE TABLE IF NOT EXISTS samples (
  frame_id INTEGER PRIMARY KEY, region TEXT NOT NULL, time INTEGER NOT NULL, row TEXT NOT NULL);
CREATE INDEX IF NOT EXISTS samples_by_time ON samples (region, time);
CREATE TABLE IF NOT EXISTS refusals (
  id INTEGER PRIMARY KEY AUTOINCREMENT, region TEXT NOT NULL, time_received INTEGER NOT NULL,
  source TEXT NOT NULL, reason TEXT NOT NULL, field TEXT NOT NULL, status INTEGER NOT NULL, frame_time INTEGER);
CREATE INDEX IF NOT EXISTS refusals_by_region ON refusals (region, time_received);
CREATE TABLE IF NOT EXISTS removed_frames (
  region TEXT NOT NULL, hash TEXT NOT NULL, time INTEGER NOT NULL, removed INTEGER NOT NULL,
  PRIMARY KEY (region, hash));
CREATE TABLE IF NOT EXISTS watched_files (
  region TEXT NOT NULL, path TEXT NOT NULL, size INTEGER NOT NULL, mtime INTEGER NOT NULL,
  PRIMARY KEY (region, path));
CREATE TABLE IF NOT EXISTS region_chores (
  id INTEGER PRIMARY KEY AUTOINCREMENT, kind TEXT NOT NULL, name TEXT NOT NULL, target TEXT);
`;

interface RawFrame {
  id: number; region: string; time: number; hash: string; nx: number; ny: number; dx: number; dy: number;
  source: string; received: number; file: string; processed: number; maps_file: string | null; waiting: string | null;
}

const toFrame = (r: RawFrame): FrameRow => ({
  id: r.id, region: r.region, time: r.time, hash: r.hash, nx: r.nx, ny: r.ny, dx: r.dx, dy: r.dy,
  source: r.source, received: r.received, file: r.file, processed: r.processed, mapsFile: r.maps_file, waiting: r.waiting,
});

export class Store {
  readonly db: Database.Database;
  readonly dataDir: string;

  constructor(dataDir: string) {
    this.dataDir = dataDir;
    const file = join(dataDir, 'helicord.sqlite');
    // Readable by the owner only, like the token: SQLite gives the -wal and -shm files the
    // database file's permissions, so the database is made (or set) 0600 before it is opened.
    if (!existsSync(file)) closeSync(openSync(file, 'a', 0o600));
    for (const f of [file, `${file}-wal`, `${file}-shm`]) if (existsSync(f)) chmodSync(f, 0o600);
    this.db = new Database(file);
    this.db.pragma('journal_mode = WAL');
    this.db.pragma('synchronous = FULL');
    this.db.pragma('foreign_keys = ON');
    this.db.exec(SCHEMA);
    // Stores made before the analysis memory was kept get its column.
    const columns = this.db.prepare('PRAGMA table_info(frames)').all() as { name: string }[];
    if (!columns.some((c) => c.name === 'memory')) this.db.exec('ALTER TABLE frames ADD COLUMN memory TEXT');
  }

  close(): void {
    this.db.close();
  }

  // Regions ---------------------------------------------------------------------------------

  regions(): RegionRow[] {
    const rows = this.db.prepare('SELECT name, created, settings, duplicates FROM regions ORDER BY name').all() as { name: string; created: number; settings: string; duplicates: number }[];
    return rows.map((r) => ({ name: r.name, created: r.created, settings: this.withDefaults(r.settings), duplicates: r.duplicates }));
  }

  region(name: string): RegionRow | undefined {
    const r = this.db.prepare('SELECT name, created, settings, duplicates FROM regions WHERE name = ?').get(name) as { name: string; created: number; settings: string; duplicates: number } | undefined;
    return r && { name: r.name, created: r.created, settings: this.withDefaults(r.settings), duplicates: r.duplicates };
  }

  private withDefaults(text: string): RegionSettings {
    const s = JSON.parse(text) as Partial<RegionSettings>;
    return { ...DEFAULT_SETTINGS, ...s, budget: { ...DEFAULT_SETTINGS.budget, ...(s.budget ?? {}) } };
  }

  createRegion(name: string, settings: RegionSettings = DEFAULT_SETTINGS, now = Date.now()): RegionRow {
    this.db.prepare('INSERT OR IGNORE INTO regions (name, created, settings) VALUES (?, ?, ?)').run(name, now, JSON.stringify(settings));
    return this.region(name)!;
  }

  saveSettings(name: string, settings: RegionSettings): void {
    this.db.prepare('UPDATE regions SET settings = ? WHERE name = ?').run(JSON.stringify(settings), name);
  }

  /**
   * Removes a region and everything stored for it (frames, samples, refusals, removed frames,
   * watched files); its files are left to the chore this records. Returns what went.
   */
  removeRegion(name: string): { frames: number; samples: number; refusals: number; chore: number } {
    const tx = this.db.transaction(() => {
      const samples = this.db.prepare('DELETE FROM samples WHERE region = ?').run(name).changes;
      const frames = this.db.prepare('DELETE FROM frames WHERE region = ?').run(name).changes;
      const refusals = this.db.prepare('DELETE FROM refusals WHERE region = ?').run(name).changes;
      for (const table of ['removed_frames', 'watched_files']) this.db.prepare(`DELETE FROM ${table} WHERE region = ?`).run(name);
      this.db.prepare('DELETE FROM regions WHERE name = ?').run(name);
      const chore = Number(this.db.prepare("INSERT INTO region_chores (kind, name) VALUES ('remove', ?)").run(name).lastInsertRowid);
      return { frames, samples, refusals, chore };
    });
    return tx();
  }

  /**
   * Gives a region another name: every row follows, and the paths of its frame, map and watched
   * files are those under the new name (the files are moved by the chore this records). Throws
   * when `to` is taken (the regions table's key).
   */
  renameRegion(from: string, to: string): { chore: number } {
    const tx = this.db.transaction(() => {
      this.db.prepare('UPDATE regions SET name = ? WHERE name = ?').run(to, from);
      const swap = (column: string, folder: string) =>
        `${column} = CASE WHEN substr(${column}, 1, length('${folder}/' || @from || '/')) = '${folder}/' || @from || '/' ` +
        `THEN '${folder}/' || @to || '/' || substr(${column}, length('${folder}/' || @from || '/') + 1) ELSE ${column} END`;
      this.db.prepare(`UPDATE frames SET region = @to, ${swap('file', 'frames')}, ${swap('maps_file', 'maps')} WHERE region = @from`).run({ from, to });
      for (const table of ['samples', 'refusals', 'removed_frames']) this.db.prepare(`UPDATE ${table} SET region = ? WHERE region = ?`).run(to, from);
      const inboxOf = (n: string) => join(this.dataDir, 'inbox', n) + '/';
      this.db.prepare(`UPDATE watched_files SET region = @to,
        path = CASE WHEN substr(path, 1, length(@old)) = @old THEN @new || substr(path, length(@old) + 1) ELSE path END WHERE region = @from`)
        .run({ from, to, old: inboxOf(from), new: inboxOf(to) });
      const chore = Number(this.db.prepare("INSERT INTO region_chores (kind, name, target) VALUES ('rename', ?, ?)").run(from, to).lastInsertRowid);
      return { chore };
    });
    return tx();
  }

  /**
   * Empties a region for a new grid: its frames and samples go, its carry becomes `carry`, its
   * duplicate count 0; settings, refusals, removed frames and watched files stay. The frame and
   * map files are left to the chore this records.
   */
  resetRegion(name: string, carry: AccumulationState): { frames: number; samples: number; chore: number } {
    const tx = this.db.transaction(() => {
      const samples = this.db.prepare('DELETE FROM samples WHERE region = ?').run(name).changes;
      const frames = this.db.prepare('DELETE FROM frames WHERE region = ?').run(name).changes;
      this.db.prepare('UPDATE regions SET duplicates = 0 WHERE name = ?').run(name);
      this.setRegionAccumulation(name, carry);
      const chore = Number(this.db.prepare("INSERT INTO region_chores (kind, name) VALUES ('reset', ?)").run(name).lastInsertRowid);
      return { frames, samples, chore };
    });
    return tx();
  }

  /** File work recorded by removals, renames and resets and not yet done, oldest first. */
  regionChores(): RegionChore[] {
    return this.db.prepare('SELECT id, kind, name, target FROM region_chores ORDER BY id').all() as RegionChore[];
  }

  choreDone(id: number): void {
    this.db.prepare('DELETE FROM region_chores WHERE id = ?').run(id);
  }

  /** The paths (relative to the data folder) of every frame and map file the region's rows name. */
  regionFiles(name: string): Set<string> {
    const rows = this.db.prepare('SELECT file, maps_file FROM frames WHERE region = ?').all(name) as { file: string; maps_file: string | null }[];
    const out = new Set<string>();
    for (const r of rows) { out.add(r.file); if (r.maps_file) out.add(r.maps_file); }
    return out;
  }

  countDuplicate(name: string): void {
    this.db.prepare('UPDATE regions SET duplicates = duplicates + 1 WHERE name = ?').run(name);
  }

  /** The region's carry after its last processed frame (budget and rules). */
  regionAccumulation(name: string): AccumulationState {
    const r = this.db.prepare('SELECT state FROM regions WHERE name = ?').get(name) as { state: string | null } | undefined;
    return r?.state ? fromSafeJson<AccumulationState>(r.state) : emptyAccumulation();
  }

  setRegionAccumulation(name: string, carry: AccumulationState): void {
    this.db.prepare('UPDATE regions SET state = ? WHERE name = ?').run(toSafeJson(carry), name);
  }

  // Frames ----------------------------------------------------------------------------------

  frameByHash(region: string, hash: string): FrameRow | undefined {
    const r = this.db.prepare('SELECT * FROM frames WHERE region = ? AND hash = ?').get(region, hash) as RawFrame | undefined;
    return r && toFrame(r);
  }

  frameAtTime(region: string, time: number): FrameRow | undefined {
    const r = this.db.prepare('SELECT * FROM frames WHERE region = ? AND time = ? LIMIT 1').get(region, time) as RawFrame | undefined;
    return r && toFrame(r);
  }

  frame(region: string, id: number): FrameRow | undefined {
    const r = this.db.prepare('SELECT * FROM frames WHERE region = ? AND id = ?').get(region, id) as RawFrame | undefined;
    return r && toFrame(r);
  }

  /** Any frame of the region (its grid is the region's grid). */
  firstFrame(region: string): FrameRow | undefined {
    const r = this.db.prepare('SELECT * FROM frames WHERE region = ? ORDER BY id LIMIT 1').get(region) as RawFrame | undefined;
    return r && toFrame(r);
  }

  latestTime(region: string): number | undefined {
    const r = this.db.prepare('SELECT MAX(time) AS t FROM frames WHERE region = ?').get(region) as { t: number | null };
    return r.t ?? undefined;
  }

  frameCount(region: string): number {
    return (this.db.prepare('SELECT COUNT(*) AS n FROM frames WHERE region = ?').get(region) as { n: number }).n;
  }

  insertFrame(f: Omit<FrameRow, 'id' | 'processed' | 'mapsFile' | 'waiting'>): number {
    const info = this.db.prepare(
      'INSERT INTO frames (region, time, hash, nx, ny, dx, dy, source, received, file) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
    ).run(f.region, f.time, f.hash, f.nx, f.ny, f.dx, f.dy, f.source, f.received, f.file);
    return Number(info.lastInsertRowid);
  }

  framesInRange(region: string, from: number, to: number): FrameRow[] {
    return (this.db.prepare('SELECT * FROM frames WHERE region = ? AND time >= ? AND time <= ? ORDER BY time').all(region, from, to) as RawFrame[]).map(toFrame);
  }

  unprocessed(region: string): FrameRow[] {
    return (this.db.prepare('SELECT * FROM frames WHERE region = ? AND processed = 0 ORDER BY time').all(region) as RawFrame[]).map(toFrame);
  }

  /** Frames of the region stored and not yet processed. */
  unprocessedCount(region: string): number {
    return (this.db.prepare('SELECT COUNT(*) AS n FROM frames WHERE region = ? AND processed = 0').get(region) as { n: number }).n;
  }

  pendingCount(): number {
    return (this.db.prepare('SELECT COUNT(*) AS n FROM frames WHERE processed = 0').get() as { n: number }).n;
  }

  /** The earliest frame of the region marked failed because a write found the disk full. */
  firstDiskFailure(region: string): FrameRow | undefined {
    const r = this.db.prepare(`SELECT * FROM frames WHERE region = ? AND processed = 2 AND (waiting LIKE '%ENOSPC%' OR waiting LIKE '%EDQUOT%'
      OR waiting LIKE '%SQLITE_FULL%' OR waiting LIKE '%no space left on device%' OR waiting LIKE '%database or disk is full%') ORDER BY time LIMIT 1`).get(region) as RawFrame | undefined;
    return r && toFrame(r);
  }

  /** The last processed (or failed) frame of the region before `time` (or overall). */
  lastProcessed(region: string, before = Number.POSITIVE_INFINITY): FrameRow | undefined {
    const r = this.db.prepare('SELECT * FROM frames WHERE region = ? AND processed > 0 AND time < ? ORDER BY time DESC LIMIT 1')
      .get(region, before === Number.POSITIVE_INFINITY ? Number.MAX_SAFE_INTEGER : before) as RawFrame | undefined;
    return r && toFrame(r);
  }

  /** The last successfully processed frame of the region before `time`. */
  lastGood(region: string, before: number): FrameRow | undefined {
    const r = this.db.prepare('SELECT * FROM frames WHERE region = ? AND processed = 1 AND time < ? ORDER BY time DESC LIMIT 1').get(region, before) as RawFrame | undefined;
    return r && toFrame(r);
  }

  /** The analysis memory stored after a frame (core/analysisMemory.ts), if any. */
  frameMemory(id: number): unknown {
    const r = this.db.prepare('SELECT memory FROM frames WHERE id = ?').get(id) as { memory: string | null } | undefined;
    return r?.memory ? fromSafeJson(r.memory) : undefined;
  }

  /** The frames of the region processed successfully with times in [from, to], oldest first. */
  goodFramesBetween(region: string, from: number, to: number): FrameRow[] {
    const rows = this.db.prepare('SELECT * FROM frames WHERE region = ? AND processed = 1 AND time >= ? AND time <= ? ORDER BY time').all(region, from, to) as RawFrame[];
    return rows.map(toFrame);
  }

  frameAccumulation(id: number): AccumulationState | undefined {
    const r = this.db.prepare('SELECT carry FROM frames WHERE id = ?').get(id) as { carry: string | null } | undefined;
    return r?.carry ? fromSafeJson<AccumulationState>(r.carry) : undefined;
  }

  /**
   * Puts every processed frame of the region after `time` back to "stored" and removes their
   * samples, so they are processed again in order; the region's carry goes back to `carry`.
   */
  rewind(region: string, time: number, carry: AccumulationState): number {
    const tx = this.db.transaction(() => {
      // Samples go by the frame they were made on (a sample of a frame pair sits at the mid-time).
      this.db.prepare('DELETE FROM samples WHERE frame_id IN (SELECT id FROM frames WHERE region = ? AND time > ? AND processed > 0)').run(region, time);
      const n = this.db.prepare('UPDATE frames SET processed = 0, carry = NULL WHERE region = ? AND time > ? AND processed > 0').run(region, time).changes;
      this.setRegionAccumulation(region, carry);
      return n;
    });
    return tx();
  }

  /**
   * Removes a frame: its row and sample go, every processed frame after `before` is put back to
   * "stored" without its sample (processed again in order), the region's carry goes back to
   * `carry`, and the frame's hash is remembered as removed. One transaction; returns how many
   * frames are to be processed again.
   */
  removeFrame(region: string, id: number, before: number, carry: AccumulationState, now = Date.now()): number {
    const tx = this.db.transaction(() => {
      const f = this.db.prepare('SELECT hash, time FROM frames WHERE region = ? AND id = ?').get(region, id) as { hash: string; time: number } | undefined;
      if (!f) return 0;
      this.db.prepare('DELETE FROM samples WHERE frame_id = ? OR frame_id IN (SELECT id FROM frames WHERE region = ? AND time > ? AND processed > 0)').run(id, region, before);
      this.db.prepare('DELETE FROM frames WHERE id = ?').run(id);
      const n = this.db.prepare('UPDATE frames SET processed = 0, carry = NULL WHERE region = ? AND time > ? AND processed > 0').run(region, before).changes;
      this.db.prepare('INSERT OR REPLACE INTO removed_frames (region, hash, time, removed) VALUES (?, ?, ?, ?)').run(region, f.hash, f.time, now);
      this.setRegionAccumulation(region, carry);
      return n;
    });
    return tx();
  }

  /** The removal record of a frame's content, if it was removed. */
  removedFrame(region: string, hash: string): { time: number; removed: number } | undefined {
    return this.db.prepare('SELECT time, removed FROM removed_frames WHERE region = ? AND hash = ?').get(region, hash) as { time: number; removed: number } | undefined;
  }

  /** Stores the outcome of one frame's processing in one transaction. */
  commitProcessed(p: {
    region: string; frameId: number; processed: 1 | 2; carry: AccumulationState; row?: SeriesRow; sampleTime?: number;
    mapsFile?: string; waiting?: string; footpoints?: unknown; events?: unknown; memory?: unknown;
  }): void {
    const tx = this.db.transaction(() => {
      this.db.prepare('UPDATE frames SET processed = ?, carry = ?, maps_file = ?, waiting = ?, footpoints = ?, events = ?, memory = ? WHERE id = ?').run(
        p.processed, toSafeJson(p.carry), p.mapsFile ?? null, p.waiting ?? null,
        p.footpoints === undefined ? null : toSafeJson(p.footpoints), p.events === undefined ? null : toSafeJson(p.events),
        p.memory === undefined ? null : toSafeJson(p.memory), p.frameId,
      );
      if (p.row && p.sampleTime !== undefined) {
        this.db.prepare('INSERT OR REPLACE INTO samples (frame_id, region, time, row) VALUES (?, ?, ?, ?)').run(p.frameId, p.region, p.sampleTime, toSafeJson(p.row));
      }
      this.setRegionAccumulation(p.region, p.carry);
    });
    tx();
  }

  /** Stored footpoint tables of the region's processed frames up to `time`, oldest first. */
  recentFootpoints(region: string, time: number, count: number): unknown[] {
    const rows = this.db.prepare('SELECT footpoints FROM frames WHERE region = ? AND time <= ? AND footpoints IS NOT NULL ORDER BY time DESC LIMIT ?').all(region, time, count) as { footpoints: string }[];
    return rows.reverse().map((r) => fromSafeJson(r.footpoints));
  }

  /** The region's processed frames that have a footpoint table, in time order (ids and times only). */
  framesWithFootpoints(region: string): { id: number; time: number }[] {
    return this.db.prepare('SELECT id, time FROM frames WHERE region = ? AND processed = 1 AND footpoints IS NOT NULL ORDER BY time').all(region) as { id: number; time: number }[];
  }

  footpoints(id: number): { footpoints: unknown; events: unknown } {
    const r = this.db.prepare('SELECT footpoints, events FROM frames WHERE id = ?').get(id) as { footpoints: string | null; events: string | null } | undefined;
    return { footpoints: r?.footpoints ? fromSafeJson(r.footpoints) : null, events: r?.events ? fromSafeJson(r.events) : null };
  }

  // Samples ---------------------------------------------------------------------------------

  samples(region: string, from = 0, to = Number.MAX_SAFE_INTEGER, limit = 1_000_000): SeriesRow[] {
    const rows = this.db.prepare('SELECT row FROM samples WHERE region = ? AND time >= ? AND time <= ? ORDER BY time LIMIT ?').all(region, from, to, limit) as { row: string }[];
    return rows.map((r) => fromSafeJson<SeriesRow>(r.row));
  }

  lastSamples(region: string, count: number): SeriesRow[] {
    const rows = this.db.prepare('SELECT row FROM samples WHERE region = ? ORDER BY time DESC LIMIT ?').all(region, count) as { row: string }[];
    return rows.reverse().map((r) => fromSafeJson<SeriesRow>(r.row));
  }

  sampleCount(region: string): number {
    return (this.db.prepare('SELECT COUNT(*) AS n FROM samples WHERE region = ?').get(region) as { n: number }).n;
  }

  lastSampleTime(region: string): number | undefined {
    const r = this.db.prepare('SELECT MAX(time) AS t FROM samples WHERE region = ?').get(region) as { t: number | null };
    return r.t ?? undefined;
  }

  // Refusals --------------------------------------------------------------------------------

  recordRefusal(region: string, r: { source: string; reason: string; field: string; status: number; frameTime?: number }, now = Date.now()): void {
    this.db.prepare('INSERT INTO refusals (region, time_received, source, reason, field, status, frame_time) VALUES (?, ?, ?, ?, ?, ?, ?)')
      .run(region, now, r.source, r.reason, r.field, r.status, r.frameTime ?? null);
  }

  refusals(region: string, limit = 1000): RefusalRow[] {
    const rows = this.db.prepare('SELECT * FROM refusals WHERE region = ? ORDER BY id DESC LIMIT ?').all(region, limit) as
      { time_received: number; source: string; reason: string; field: string; status: number; frame_time: number | null }[];
    return rows.reverse().map((r) => ({
      time_received: new Date(r.time_received).toISOString(), source: r.source, reason: r.reason, field: r.field,
      status: r.status, frame_time: r.frame_time === null ? null : new Date(r.frame_time).toISOString(),
    }));
  }

  refusalTimes(region: string, since: number): number[] {
    return (this.db.prepare('SELECT time_received AS t FROM refusals WHERE region = ? AND time_received > ? ORDER BY id').all(region, since) as { t: number }[]).map((r) => r.t);
  }

  refusalCount(region: string): number {
    return (this.db.prepare('SELECT COUNT(*) AS n FROM refusals WHERE region = ?').get(region) as { n: number }).n;
  }

  // Watched files ---------------------------------------------------------------------------

  watchedFileSeen(region: string, path: string, size: number, mtime: number): boolean {
    const r = this.db.prepare('SELECT size, mtime FROM watched_files WHERE region = ? AND path = ?').get(region, path) as { size: number; mtime: number } | undefined;
    return r !== undefined && r.size === size && r.mtime === mtime;
  }

  markWatchedFile(region: string, path: string, size: number, mtime: number): void {
    this.db.prepare('INSERT OR REPLACE INTO watched_files (region, path, size, mtime) VALUES (?, ?, ?, ?)').run(region, path, size, mtime);
  }
}
