// The batch workers run the compiled dist/ JavaScript. Tests that start them first make sure
// dist/ is not older than the sources it comes from (a build of replay/ and what it imports).
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

const root = join(import.meta.dirname ?? new URL('.', import.meta.url).pathname, '..', '..');

function newestSource(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) t = Math.max(t, newestSource(p));
    else if (e.name.endsWith('.ts')) t = Math.max(t, statSync(p).mtimeMs);
  }
  return t;
}

export function ensureCompiledWorker(): void {
  const worker = join(root, 'dist', 'replay', 'batchWorker.js');
  const sources = Math.max(newestSource(join(root, 'replay')), newestSource(join(root, 'core')), newestSource(join(root, 'server')));
  if (existsSync(worker) && statSync(worker).mtimeMs >= sources) return;
  try {
    execFileSync(join(root, 'node_modules', '.bin', 'tsc'), ['-p', join(root, 'test', 'replay', 'tsconfig.batch.json')], { cwd: root, stdio: 'pipe' });
  } catch {
    // tsc reports type errors of files being written by others but still emits: check the output.
  }
  if (!existsSync(worker)) throw new Error('could not compile the batch worker into dist/');
}
