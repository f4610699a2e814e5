// Reading frame files from disk: JSON frames (core/frameJson.ts) and FITS frames (core/fits,
// core/frameAssembly): .fits/.fts/.fit, optionally gzip-compressed (.fits.gz ...).
import { readFile } from 'node:fs/promises';
import { basename } from 'node:path';
import { gunzipSync } from 'node:zlib';
import type { Frame } from '../core/frame.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { frameFromFits } from '../core/frameAssembly/assembleFrame.js';
import { framesFromFileSet } from '../core/frameAssembly/componentFiles.js';
import { parseFrameJson } from '../core/frameJson.js';
import { InputError } from '../core/inputError.js';
import { checkPhysicalLimits } from '../core/physicalLimits.js';
import { fileProblem } from './fileProblem.js';

function withinLimits(frame: Frame, source: string): Frame {
  checkPhysicalLimits(frame, source);
  return frame;
}

const FITS_NAME = /\.(fits|fts|fit)(\.gz)?$/i;
/** Largest inflated .fits.gz accepted (a 4096^2 float64 map with five companions is ~800 MB). */
const MAX_INFLATED_BYTES = 2 ** 30;

/**
 * The bound on an inflated .fits.gz: with a pixel budget (settings.read.maxPixels), six float64
 * images of that size and 16 MiB of headers; otherwise 1 GiB.
 */
function inflatedLimit(settings: FrameAssemblySettings): number {
  const px = settings.read?.maxPixels;
  return px === undefined ? MAX_INFLATED_BYTES : Math.min(MAX_INFLATED_BYTES, px * 8 * 6 + 16 * 2 ** 20);
}

function gunzipBounded(bytes: Uint8Array, path: string, limit: number): Uint8Array {
  let out: Buffer;
  try {
    out = gunzipSync(bytes, { maxOutputLength: limit });
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ERR_BUFFER_TOO_LARGE' || /larger than|maxOutputLength/i.test((e as Error).message)) {
      throw new InputError(path, '(gzip)', `the inflated file exceeds the limit of ${limit} bytes`);
    }
    throw new InputError(path, '(gzip)', `cannot be decompressed: ${code ?? 'corrupt data'}`);
  }
  return new Uint8Array(out.buffer, out.byteOffset, out.byteLength);
}

/** A file's bytes, inflated when its name ends in .gz. Throws InputError naming the file. */
export async function readBytes(path: string, settings: FrameAssemblySettings = {}): Promise<Uint8Array> {
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (e) {
    throw new InputError(path, '(file)', fileProblem(e));
  }
  const raw = new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  return /\.gz$/i.test(path) ? gunzipBounded(raw, path, inflatedLimit(settings)) : raw;
}

/**
 * A frame from a file's bytes, read by its name's extension as loadFrameFile does (the monitor's
 * intake reads watched files itself, without following links). `settings.read.maxPixels` is the
 * pixel budget, also for JSON frames and before a .gz is inflated past it.
 */
export function frameFromFileBytes(path: string, bytes: Uint8Array, settings: FrameAssemblySettings = {}): Frame {
  // The same physical limits as the monitor's intake: a corrupt map does not reach a budget.
  return withinLimits(readFrameBytes(path, bytes, settings), path);
}

function readFrameBytes(path: string, bytes: Uint8Array, settings: FrameAssemblySettings): Frame {
  const name = basename(path);
  const maxPixels = settings.read?.maxPixels;
  if (/\.json$/i.test(name)) {
    return parseFrameJson(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8'), path, maxPixels !== undefined ? { maxPixels } : {});
  }
  if (FITS_NAME.test(name)) return frameFromFits(/\.gz$/i.test(name) ? gunzipBounded(bytes, path, inflatedLimit(settings)) : bytes, path, settings);
  throw new InputError(path, '(file)', 'unknown frame file type: expected .json, .fits, .fts or .fit (optionally .gz)');
}

/**
 * Loads one frame file (by extension): .json, or .fits/.fts/.fit(.gz) with image HDUs named BN
 * (required), BX, BY, VX, VY, VZ. `settings` (per region) adds unit defaults, sign/mirror
 * corrections and the time keyword. Throws InputError naming the file.
 */
export async function loadFrameFile(path: string, settings: FrameAssemblySettings = {}): Promise<Frame> {
  const name = basename(path);
  if (!/\.json$/i.test(name) && !FITS_NAME.test(name)) {
    throw new InputError(path, '(file)', 'unknown frame file type: expected .json, .fits, .fts or .fit (optionally .gz)');
  }
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (e) {
    throw new InputError(path, '(file)', fileProblem(e));
  }
  return frameFromFileBytes(path, new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength), settings);
}

/**
 * Loads FITS files holding one component each (several files per time): each file is given a
 * component by the region's rules (`settings.files`: a file-name pattern or a header keyword per
 * component), files are grouped by observation time, and one frame per time is returned, in time order.
 */
export async function loadFrameFileSet(paths: readonly string[], settings: FrameAssemblySettings): Promise<Frame[]> {
  const files = [];
  for (const p of paths) {
    if (!FITS_NAME.test(basename(p))) throw new InputError(p, '(file)', 'a multi-file frame set takes FITS files (.fits, .fts, .fit, optionally .gz)');
    files.push({ name: p, bytes: await readBytes(p, settings) });
  }
  return framesFromFileSet(files, settings).map((f) => withinLimits(f, f.provenance?.source ?? paths[0]));
}
