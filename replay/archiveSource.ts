// An archive on disk: a folder of frame files (JSON frames, FITS frames) as ordered frames with
// their times. The folder is scanned once (each file read, checked and described), put in order
// by archiveOrder, and frames are then read again one at a time when they are wanted, so that a
// long archive never sits in memory whole. With component settings that read one file per
// component (a layout such as cea-components, or file rules), the scan reads each file's headers
// only, the files are grouped by time, and a frame is assembled from its group when it is read.

import { readdir, realpath } from 'node:fs/promises';
import { basename, isAbsolute, join, relative, sep } from 'node:path';
import type { Frame } from '../core/frame.js';
import { hasVelocity } from '../core/frame.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import type { ComponentFile } from '../core/frameAssembly/componentFiles.js';
import { describeComponentFile, groupComponentFiles } from '../core/frameAssembly/componentFiles.js';
import { readsComponentFiles, resolveLayout } from '../core/frameAssembly/componentLayouts.js';
import { InputError } from '../core/inputError.js';
import { fileProblem } from './fileProblem.js';
import { loadFrameFile, loadFrameFileSet, readBytes } from './frameFiles.js';
import type { ArchiveIndex, ScanResult, ScannedFrame, SkippedFile } from './archiveOrder.js';
import { isScannedFrame, orderArchive } from './archiveOrder.js';

/** File names taken as frames: JSON frames and FITS files (also gzip- or fpack-compressed). */
export const FRAME_FILE_PATTERN = /\.(json|fits|fit|fts|fz)(\.gz)?$/i;

/** The frame files of a folder (full paths, name order). Throws InputError when it cannot be read. */
export async function listFrameFiles(folder: string): Promise<string[]> {
  let names: string[];
  try {
    names = await readdir(folder);
  } catch (e) {
    throw new InputError(folder, '(folder)', fileProblem(e, 'folder'));
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
export async function scanFile(file: string, components: FrameAssemblySettings = {}): Promise<ScanResult> {
  try {
    return describeFrame(file, await loadFrameFile(file, components));
  } catch (e) {
    return { file, reason: reasonOf(e) };
  }
}

/** What the scan of one component file found: its component, time and grid. */
export type ComponentScan = ComponentFile & { readonly dx: number; readonly dy: number };
export type FileScan = ScanResult | ComponentScan;

const isComponentScan = (r: FileScan): r is ComponentScan => (r as ComponentScan).map !== undefined;

/** Reads one component file's headers (nothing decoded), or says why it cannot be used. Never throws. */
export async function scanComponentFile(file: string, components: FrameAssemblySettings): Promise<ComponentScan | SkippedFile> {
  try {
    return describeComponentFile({ name: file, bytes: await readBytes(file, components) }, components);
  } catch (e) {
    return { file, reason: reasonOf(e) };
  }
}

/** One file's scan as the settings read it: a whole frame, or one component of one. */
export function scanOne(file: string, components: FrameAssemblySettings = {}): Promise<FileScan> {
  return readsComponentFiles(components) ? scanComponentFile(file, components) : scanFile(file, components);
}

/**
 * The ordered archive from the scans of its files: component files are grouped by time first
 * (each time's bn file names the frame; a time that does not make a frame sets its files aside
 * with the reason).
 */
export function indexScans(results: readonly FileScan[], components: FrameAssemblySettings = {}): ArchiveIndex {
  if (!results.some(isComponentScan)) return orderArchive(results as ScanResult[]);
  const scans = results.filter(isComponentScan);
  const byFile = new Map(scans.map((c) => [c.file, c]));
  const out: ScanResult[] = results.filter((r): r is SkippedFile => !isComponentScan(r) && !isScannedFrame(r));
  for (const g of groupComponentFiles(scans, resolveLayout(components).groupToleranceS)) {
    if ('problem' in g) {
      for (const m of g.members) out.push({ file: m, time: g.time, reason: m === g.file ? g.problem : `${basename(g.file)} ${g.problem}` });
      continue;
    }
    const bn = byFile.get(g.files.bn!)!;
    const files = [bn.file, ...Object.entries(g.files).filter(([m]) => m !== 'bn').map(([, f]) => f!)];
    out.push({ file: bn.file, files, time: g.time, nx: bn.nx, ny: bn.ny, dx: bn.dx, dy: bn.dy, hasVelocity: g.files.vx !== undefined && g.files.vy !== undefined });
  }
  return orderArchive(out);
}

/** Reads one frame of an archive: from its file, or assembled from its component files. */
export async function loadEntry(entry: { readonly file: string; readonly files?: readonly string[] }, components: FrameAssemblySettings = {}): Promise<Frame> {
  if (!entry.files) return loadFrameFile(entry.file, components);
  const frames = await loadFrameFileSet(entry.files, components);
  if (frames.length !== 1) throw new InputError(entry.file, '(file)', `its component files (${entry.files.map((f) => basename(f)).join(', ')}) no longer make one frame`);
  return frames[0];
}

export interface Archive extends ArchiveIndex {
  readonly folder: string;
  /** Reads entry i again (it was readable at the scan). */
  frame(i: number): Promise<Frame>;
  /** The frames in time order, read one at a time. */
  frames(from?: number): AsyncGenerator<{ index: number; entry: ScannedFrame; frame: Frame }>;
}

export interface OpenOptions {
  /** How FITS files map to components (a layout, file rules, corrections). */
  readonly components?: FrameAssemblySettings;
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
async function scanWithin(file: string, within: string | undefined, components: FrameAssemblySettings): Promise<FileScan> {
  if (within !== undefined) {
    let real: string;
    try {
      real = await realpath(file);
    } catch (e) {
      return { file, reason: `(file): cannot be read: ${(e as NodeJS.ErrnoException).code ?? 'error'}` };
    }
    if (!inside(within, real)) return { file, reason: '(file): is a link that leads out of the replay root; not followed' };
  }
  return scanOne(file, components);
}

/** Scans a folder in this thread and opens it as an ordered archive. */
export async function openArchive(folder: string, options: OpenOptions = {}): Promise<Archive> {
  const files = await listFrameFiles(folder);
  const within = options.within !== undefined ? await realpath(options.within) : undefined;
  const components = options.components ?? {};
  const results: FileScan[] = [];
  for (const f of files) results.push(await scanWithin(f, within, components));
  return archiveFromIndex(folder, indexScans(results, components), within, components);
}

/** An archive over an index already made (for example by worker scans). */
export function archiveFromIndex(folder: string, index: ArchiveIndex, within?: string, components: FrameAssemblySettings = {}): Archive {
  const frame = async (i: number): Promise<Frame> => {
    const entry = index.entries[i];
    if (!entry) throw new InputError(folder, 'frame', `index ${i} is outside 0..${index.entries.length - 1}`);
    // A file replaced by a link since the scan is not followed out of the root either.
    for (const file of entry.files ?? [entry.file]) {
      if (within !== undefined && !inside(within, await realpath(file))) throw new InputError(file, '(file)', 'is a link that leads out of the replay root; not followed');
    }
    const f = await loadEntry(entry, components);
    if (f.time !== entry.time) throw new InputError(entry.file, 'time', 'changed since the archive was scanned');
    return f;
  };
  async function* frames(from = 0) {
    for (let i = from; i < index.entries.length; i++) yield { index: i, entry: index.entries[i], frame: await frame(i) };
  }
  return { folder, ...index, frame, frames };
}
