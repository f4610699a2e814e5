// Reading frame files from disk: JSON frames now; FITS frames join here (see core/fits).
import { readFile } from 'node:fs/promises';
import { basename } from 'node:path';
import type { Frame } from '../core/frame.js';
import { parseFrameJson } from '../core/frameJson.js';
import { InputError } from '../core/inputError.js';

/** Loads one frame file (by extension). Throws InputError naming the file. */
export async function loadFrameFile(path: string): Promise<Frame> {
  const name = basename(path);
  let bytes: Buffer;
  try {
    bytes = await readFile(path);
  } catch (e) {
    throw new InputError(path, '(file)', `cannot be read: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  if (/\.json$/i.test(name)) return parseFrameJson(bytes.toString('utf8'), path);
  throw new InputError(path, '(file)', 'unknown frame file type: expected .json');
}
