// `npm run bench [-- NAME ...]`: runs every benchmark module in this folder (each exports
// `bench(): Promise<void>` and prints its own figures), or only those whose file name is given.
import { readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const wanted = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.js') && f !== 'run.js' && !f.startsWith('_'))
  .filter((f) => wanted.length === 0 || wanted.includes(f.replace(/\.js$/, '')));
for (const f of files) {
  const mod = (await import(pathToFileURL(join(here, f)).href)) as { bench?: () => Promise<void> };
  if (typeof mod.bench !== 'function') continue;
  console.log(`\n== ${f.replace(/\.js$/, '')} ==`);
  await mod.bench();
}
