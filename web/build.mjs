// Bundles the dashboard into dist/web/ (index.html, app.js, app.css): esbuild, everything local,
// nothing fetched at run time. `node web/build.mjs` builds; `--watch` rebuilds on change.
// Also usable from tests: `import { buildPage } from '../../web/build.mjs'`.
import { build, context } from 'esbuild';
import { copyFile, mkdir } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..');

/** Builds the page into outDir (default dist/web); answers the list of files written. */
export async function buildPage(outDir = join(root, 'dist', 'web'), { minify = true } = {}) {
  await mkdir(outDir, { recursive: true });
  const options = {
    entryPoints: { app: join(here, 'main.ts') },
    bundle: true,
    format: 'esm',
    target: ['es2022'],
    platform: 'browser',
    outdir: outDir,
    minify,
    sourcemap: true,
    legalComments: 'linked',
    logLevel: 'warning',
    define: { 'process.env.NODE_ENV': '"production"' },
  };
  await build(options);
  await build({ entryPoints: { app: join(here, 'app.css') }, bundle: true, outdir: outDir, minify, logLevel: 'warning' });
  await copyFile(join(here, 'index.html'), join(outDir, 'index.html'));
  return ['index.html', 'app.js', 'app.css'].map((f) => join(outDir, f));
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const outDir = join(root, 'dist', 'web');
  if (process.argv.includes('--watch')) {
    const ctx = await context({ entryPoints: { app: join(here, 'main.ts') }, bundle: true, format: 'esm', outdir: outDir, sourcemap: true });
    await buildPage(outDir, { minify: false });
    await ctx.watch();
    process.stdout.write(`watching web/ -> ${outDir}\n`);
  } else {
    const files = await buildPage(outDir);
    process.stdout.write(`built ${files.join(', ')}\n`);
  }
}
