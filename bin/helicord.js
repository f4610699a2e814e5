#!/bin/sh
':' //; case "$1" in process|survey) export MALLOC_ARENA_MAX="${MALLOC_ARENA_MAX:-1}" MALLOC_MMAP_THRESHOLD_="${MALLOC_MMAP_THRESHOLD_:-2097152}";; esac; exec node "$0" "$@"
// Launcher, read twice: by the shell when run as a program (`npx helicord`, `./bin/helicord.js`),
// where the line above sets glibc's allocator for the batch commands, keeping values the caller
// set, and starts Node on this same file; then by Node, for which that line is a string and a
// comment. The settings and why: replay/batchAllocator.ts (which must say the same: its test
// checks). `node bin/helicord.js` skips the shell line.
// The TypeScript is compiled to dist/ by `npm install` (the prepare script).
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { dirname, join } from 'node:path';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const cli = join(root, 'dist', 'server', 'cli.js');
if (!existsSync(cli)) {
  process.stderr.write('helicord: the compiled program is missing (dist/). Run `npm install` or `npm run build` in ' + root + '\n');
  process.exit(2);
}
const { main } = await import(pathToFileURL(cli).href);
process.exitCode = await main(process.argv.slice(2));
