// Putting an archive in order: frames sorted by time, whatever their file names; frames of
// another grid than the archive's, and frames with a time already taken, set aside with the
// reason. Pure: it works on what a scan found, and reads nothing itself.

import type { Grid } from '../core/grid.js';
import { sameGrid } from '../core/grid.js';

/** What a scan learnt about one readable frame file. */
export interface ScannedFrame extends Grid {
  readonly file: string;
  /** UTC ms. */
  readonly time: number;
  /** The frame carries vx, vy. */
  readonly hasVelocity: boolean;
  /**
   * With one file per component: every file of the frame, bn's first (`file` is bn's). Absent for
   * a frame in one file.
   */
  readonly files?: readonly string[];
}

/** A file that could not be used, and why. */
export interface SkippedFile {
  readonly file: string;
  readonly reason: string;
  /** The frame's time when it was readable (a duplicate, another grid). */
  readonly time?: number;
}

export type ScanResult = ScannedFrame | SkippedFile;

export interface ArchiveIndex {
  /** Usable frames in time order. */
  readonly entries: readonly ScannedFrame[];
  /** Files set aside, in name order, each with its reason. */
  readonly skipped: readonly SkippedFile[];
  /** The grid every entry has. Undefined when no frame was readable. */
  readonly grid?: Grid;
  /** Files whose place in time order differs from their place in name order. */
  readonly reordered: readonly string[];
}

export function isScannedFrame(r: ScanResult): r is ScannedFrame {
  // A file set aside may carry a time too (a time that did not make a frame): the reason tells.
  return (r as SkippedFile).reason === undefined && (r as ScannedFrame).time !== undefined;
}

const byName = (a: { file: string }, b: { file: string }) => (a.file < b.file ? -1 : a.file > b.file ? 1 : 0);

export function describeGrid(g: Grid): string {
  return `${g.nx}x${g.ny} pixels of ${g.dx}x${g.dy} Mm`;
}

/**
 * Orders scan results. The archive's grid is the one most frames share (on a tie, the grid of
 * the earliest such frame); a time held by several files goes to the first in name order.
 */
export function orderArchive(results: readonly ScanResult[]): ArchiveIndex {
  const skipped: SkippedFile[] = [];
  const frames: ScannedFrame[] = [];
  for (const r of results) (isScannedFrame(r) ? frames : skipped).push(r as never);
  frames.sort(byName);

  // The archive's grid: the most common one.
  const grids: { grid: Grid; count: number; first: number }[] = [];
  for (const f of frames) {
    const g = grids.find((x) => sameGrid(x.grid, f));
    if (g) { g.count++; g.first = Math.min(g.first, f.time); }
    else grids.push({ grid: { nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy }, count: 1, first: f.time });
  }
  grids.sort((a, b) => b.count - a.count || a.first - b.first);
  const grid = grids[0]?.grid;

  const kept: ScannedFrame[] = [];
  const byTime = new Map<number, ScannedFrame>();
  for (const f of frames) {
    if (grid && !sameGrid(grid, f)) {
      skipped.push({ file: f.file, time: f.time, reason: `grid is ${describeGrid(f)}, not the archive's ${describeGrid(grid)}` });
      continue;
    }
    const first = byTime.get(f.time);
    if (first) {
      skipped.push({ file: f.file, time: f.time, reason: `same time ${new Date(f.time).toISOString()} as ${first.file}, which is used` });
      continue;
    }
    byTime.set(f.time, f);
    kept.push(f);
  }
  kept.sort((a, b) => a.time - b.time);
  // A file is out of name order when its time rank differs from its rank among kept names.
  const keptNames = [...kept].sort(byName).map((f) => f.file);
  const reordered = kept.filter((f, i) => keptNames[i] !== f.file).map((f) => f.file);
  skipped.sort(byName);
  return { entries: kept, skipped, ...(grid && { grid }), reordered };
}
