// The frame files of a survey region: a folder's frame files (replay/archiveSource.ts), or the
// files a pattern names (`*` any run of characters, `?` one, in the last part of the path only),
// in name order. A folder that is missing, unreadable or holds no frame file is an InputError
// naming it.

import { readdir } from 'node:fs/promises';
import { basename, dirname, join } from 'node:path';
import { InputError } from '../../core/inputError.js';
import { listFrameFiles } from '../archiveSource.js';
import { fileProblem } from '../fileProblem.js';

export function isPattern(spec: string): boolean {
  return /[*?]/.test(basename(spec));
}

function patternRegExp(glob: string): RegExp {
  return new RegExp(`^${glob.replace(/[.+^${}()|[\]\\]/g, '\\$&').replace(/\*/g, '.*').replace(/\?/g, '.')}$`);
}

export async function regionFiles(spec: string): Promise<string[]> {
  if (!isPattern(spec)) {
    const files = await listFrameFiles(spec);
    if (files.length === 0) throw new InputError(spec, '(folder)', 'holds no frame files (.json, .fits)');
    return files;
  }
  const folder = dirname(spec);
  if (/[*?]/.test(folder)) throw new InputError(spec, '(pattern)', 'may have * and ? only in its last part');
  let names: string[];
  try {
    names = await readdir(folder);
  } catch (e) {
    throw new InputError(folder, '(folder)', fileProblem(e, 'folder'));
  }
  const re = patternRegExp(basename(spec));
  const files = names.filter((n) => !n.startsWith('.') && re.test(n)).sort().map((n) => join(folder, n));
  if (files.length === 0) throw new InputError(spec, '(pattern)', 'matches no file');
  return files;
}

/** A problem in words for the survey table: "/data/ar-9 does not exist", "x.json: time: ...". */
export function problemText(e: unknown): string {
  if (e instanceof InputError) return /^\(.*\)$/.test(e.field) ? `${e.source} ${e.problem}` : `${e.source}: ${e.field}: ${e.problem}`;
  return e instanceof Error ? e.message : String(e);
}
