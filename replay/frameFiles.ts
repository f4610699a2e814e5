// Reading frame files from disk: JSON frames (core/frameJson.ts) and FITS frames (core/fits,
// core/frameAssembly): .fits/.fts/.fit, optionally gzip-compressed (.fits.gz ...).
import { readFile } from 'node:fs/promises';
import { basename } from 'node:path';
import { gunzipSync } from 'node:zlib';
import type { Frame } from '../core/frame.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { frameFromFits, framesFromFileSet } from '../core/frameAssembly/assembleFrame.js';
import { parseFrameJson } from '../core/frameJson.js';
import { InputError } from '../core/inputError.js';

const FITS_NAME = /\.(fits|fts|fit)(\.gz)?$/i;
/** Largest inflated .fits.gz accepted (a 4096^2 float64 map with five companions is ~800 MB). */
const MAX_INFLATED_BYTES = 2 ** 30;

async function readBytes(path: string): Promise<Uint8Array> {
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (e) {
    throw new InputError(path, '(file)', `cannot be read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  if (/\.gz$/i.test(path)) {
    try {
      bytes = gunzipSync(bytes, { maxOutputLength: MAX_INFLATED_BYTES });
    } catch (e) {
      throw new InputError(path, '(gzip)', `cannot be decompressed: ${(e as Error).message}`);
    }
  }
  return new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength);
}

/**
 * Loads one frame file (by extension): .json, or .fits/.fts/.fit(.gz) with image HDUs named BN
 * (required), BX, BY, VX, VY, VZ. `settings` (per region) adds unit defaults, sign/mirror
 * corrections and the time keyword. Throws InputError naming the file.
 */
export async function loadFrameFile(path: string, settings: FrameAssemblySettings = {}): Promise<Frame> {
  const name = basename(path);
  if (/\.json$/i.test(name)) {
    const bytes = await readBytes(path);
    return parseFrameJson(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8'), path);
  }
  if (FITS_NAME.test(name)) return frameFromFits(await readBytes(path), path, settings);
  throw new InputError(path, '(file)', 'unknown frame file type: expected .json, .fits, .fts or .fit (optionally .gz)');
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
    files.push({ name: p, bytes: await readBytes(p) });
  }
  return framesFromFileSet(files, settings);
}
