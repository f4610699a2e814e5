// An archive on disk: a folder of frame files (JSON frames, FITS frames) as ordered frames with
// their times. The folder is scanned once (each file read, checked and described), put in order
// by archiveOrder, and frames are then read again one at a time when they are wanted, so that a
// long archive never sits in memory whole.

import { readdir, realpath } from 'node:fs/promises';
import { isAbsolute, join, relative, sep } from 'node:path';
import type { Frame } from '../core/frame.js';
import { hasVelocity } from '../core/frame.js';
import { InputError } from '../core/inputError.js';
import { loadFrameFile } from './frameFiles.js';
import type { ArchiveIndex, ScanResult, ScannedFrame } from './archiveOrder.js';
import { orderArchive } from './archiveOrder.js';

/** File names taken as frames: JSON frames and FITS files (also gzip- or fpack-compressed). */
export const FRAME_FILE_PATTERN = /\.(json|fits|fit|fts|fz)(\.gz)?$/i;

/** The frame files of a folder (full paths, name order). Throws InputError when it cannot be read. */
export async function listFrameFiles(folder: string): Promise<string[]> {
  let names: string[];
  try {
    names = await readdir(folder);
  } catch (e) {
    throw new InputError(folder, '(folder)', `cannot be read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  return names.filter((n) => !n.startsWith('.') && FRAME_FILE_PATTERN.test(n)).sort().map((n) => join(folder, n));
}

/** Why a frame could not be used, in words, without repeating the file name. */
export function reasonOf(e: unknown): string {
  if (e instanceof InputError) return `${e.field}: ${e.problem}`;
  return e instanceof Error ? e.message : String(e);
}

/** What a scan records of one frame. */
export function describeFrame(file: string, f: Frame): ScannedFrame {
  return { file, time: f.time, nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy, hasVelocity: hasVelocity(f) };
}

/** Reads one file and describes it, or says why it cannot be used. Never throws. */
export async function scanFile(file: string): Promise<ScanResult> {
  try {
    return describeFrame(file, await loadFrameFile(file));
  } catch (e) {
    return { file, reason: reasonOf(e) };
  }
}

export interface Archive extends ArchiveIndex {
  readonly folder: string;
  /** Reads entry i again (it was readable at the scan). */
  frame(i: number): Promise<Frame>;
  /** The frames in time order, read one at a time. */
  frames(from?: number): AsyncGenerator<{ index: number; entry: ScannedFrame; frame: Frame }>;
}

export interface OpenOptions {
  /**
   * Files are read only when their real path (links resolved) is inside this folder: a link that
   * leads out of it is skipped with the reason (the monitor's replay root).
   */
  readonly within?: string;
}

/** True when `path` is `base` or inside it. */
function inside(base: string, path: string): boolean {
  const r = relative(base, path);
  return r === '' || (r !== '..' && !r.startsWith('..' + sep) && !isAbsolute(r));
}

/** Reads one file unless its real path leaves `within`. Never throws. */
async function scanWithin(file: string, within: string | undefined): Promise<ScanResult> {
  if (within !== undefined) {
    let real: string;
    try {
      real = await realpath(file);
    } catch (e) {
      return { file, reason: `(file): cannot be read: ${(e as NodeJS.ErrnoException).code ?? 'error'}` };
    }
    if (!inside(within, real)) return { file, reason: '(file): is a link that leads out of the replay root; not followed' };
  }
  return scanFile(file);
}

/** Scans a folder in this thread and opens it as an ordered archive. */
export async function openArchive(folder: string, options: OpenOptions = {}): Promise<Archive> {
  const files = await listFrameFiles(folder);
  const within = options.within !== undefined ? await realpath(options.within) : undefined;
  const results: ScanResult[] = [];
  for (const f of files) results.push(await scanWithin(f, within));
  return archiveFromIndex(folder, orderArchive(results), within);
}

/** An archive over an index already made (for example by worker scans). */
export function archiveFromIndex(folder: string, index: ArchiveIndex, within?: string): Archive {
  const frame = async (i: number): Promise<Frame> => {
    const entry = index.entries[i];
    if (!entry) throw new InputError(folder, 'frame', `index ${i} is outside 0..${index.entries.length - 1}`);
    // A file replaced by a link since the scan is not followed out of the root either.
    if (within !== undefined && !inside(within, await realpath(entry.file))) throw new InputError(entry.file, '(file)', 'is a link that leads out of the replay root; not followed');
    const f = await loadFrameFile(entry.file);
    if (f.time !== entry.time) throw new InputError(entry.file, 'time', 'changed since the archive was scanned');
    return f;
  };
  async function* frames(from = 0) {
    for (let i = from; i < index.entries.length; i++) yield { index: i, entry: index.entries[i], frame: await frame(i) };
  }
  return { folder, ...index, frame, frames };
}
