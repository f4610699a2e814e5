// The batch workers run the compiled dist/ JavaScript. Tests that start them first make sure
// dist/ is not older than the sources the worker imports (followed through their relative
// imports), and otherwise build replay/ and what it imports.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

/** Newest modification time among `entry` and every .ts file it imports, directly or not. */
function newestInClosure(entry: string): number {
  const seen = new Set<string>();
  const stack = [entry];
  let newest = 0;
  while (stack.length > 0) {
    const file = stack.pop()!;
    if (seen.has(file) || !existsSync(file)) continue;
    seen.add(file);
    newest = Math.max(newest, statSync(file).mtimeMs);
    const text = readFileSync(file, 'utf8');
    for (const m of text.matchAll(/(?:from|import)\s*\(?\s*'(\.{1,2}\/[^']+)\.js'/g)) {
      stack.push(resolve(dirname(file), `${m[1]}.ts`));
    }
  }
  return newest;
}

export function ensureCompiledWorker(): void {
  const worker = join(root, 'dist', 'replay', 'batchWorker.js');
  const sources = newestInClosure(join(root, 'replay', 'batchWorker.ts'));
  if (existsSync(worker) && statSync(worker).mtimeMs >= sources) return;
  try {
    execFileSync(join(root, 'node_modules', '.bin', 'tsc'), ['-p', join(root, 'test', 'replay', 'tsconfig.batch.json')], { cwd: root, stdio: 'pipe' });
  } catch {
    // tsc reports type errors of files being written by others but still emits: check the output.
  }
  if (!existsSync(worker)) throw new Error('could not compile the batch worker into dist/');
}

/**
 * The whole command line compiled (for tests that start `bin/helicord.js` as a process, e.g. a
 * Slurm job): dist/server/cli.js not older than the sources it imports, else `tsc -p tsconfig.json`.
 */
export function ensureCompiledCli(): void {
  ensureCompiledWorker();
  const cli = join(root, 'dist', 'server', 'cli.js');
  if (existsSync(cli) && statSync(cli).mtimeMs >= newestInClosure(join(root, 'server', 'cli.ts'))) return;
  try {
    execFileSync(join(root, 'node_modules', '.bin', 'tsc'), ['-p', join(root, 'tsconfig.json')], { cwd: root, stdio: 'pipe' });
  } catch {
    // Type errors of files being written by others: tsc still emits; check the output.
  }
  if (!existsSync(cli)) throw new Error('could not compile the command line into dist/');
}
