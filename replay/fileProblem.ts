// Why a file or folder could not be opened, in words (for InputError's problem): "does not exist"
// rather than a raw ENOENT; and a JSON file read with such errors.
import { readFile } from 'node:fs/promises';
import { InputError } from '../core/inputError.js';

export function fileProblem(e: unknown, what: 'file' | 'folder' = 'file'): string {
  const code = (e as NodeJS.ErrnoException).code;
  switch (code) {
    case 'ENOENT': return 'does not exist';
    case 'EACCES': case 'EPERM': return 'cannot be read: permission denied';
    case 'EISDIR': return 'is a folder, not a file';
    case 'ENOTDIR': return what === 'folder' ? 'is not a folder' : 'cannot be reached: a part of its path is a file, not a folder';
    case 'ELOOP': return 'cannot be reached: its links go round in a loop';
    default: return `cannot be read: ${code ?? (e as Error).message}`;
  }
}

/**
 * The parsed content of a JSON file. Throws InputError(path, field, ...) when it cannot be read
 * or parsed; `field` says what the file is ('(config file)', '(labels file)').
 */
export async function readJsonFile(path: string, field: string): Promise<unknown> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(path, field, fileProblem(e));
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new InputError(path, field, `cannot be read as JSON: ${(e as Error).message}`);
  }
}
