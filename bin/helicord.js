#!/usr/bin/env node
// Launcher: the TypeScript is compiled to dist/ by `npm install` (the prepare script).
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
