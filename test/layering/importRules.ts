// The layering rules of DEVELOPERS.md ("Layout"), checked by reading import lines: every static
// `import ... from`, side-effect `import '...'`, `export ... from` and dynamic `import('...')` of
// the .ts/.mjs files under core/, server/, replay/ and web/ (test/ may import anything).
//   core    -> core only; no Node built-ins; packages only from CORE_PACKAGES (pure, browser-safe)
//   replay  -> replay, core (never server or web)
//   server  -> server, core, replay
//   web     -> web, core; no Node built-ins (web/build.mjs, the bundler script run by Node, is
//              build tooling, not the page, and is left out)
// A small reader of our own rather than a dependency: the rules are four lines and the import
// forms we use are few; a violation is reported as "file:line: imports X (layer may import ...)".

import { readdirSync, readFileSync } from 'node:fs';
import { builtinModules } from 'node:module';
import { dirname, join, relative, resolve, sep } from 'node:path';

export type Layer = 'core' | 'server' | 'replay' | 'web';

/** Folders each layer may import from (relative specifiers resolved against the file). */
export const MAY_IMPORT: Record<Layer, readonly Layer[]> = {
  core: ['core'],
  replay: ['replay', 'core'],
  server: ['server', 'core', 'replay'],
  web: ['web', 'core'],
};

/** npm packages core may use: pure computation that runs in Node, a worker and the browser. */
export const CORE_PACKAGES: readonly string[] = ['fflate'];

/** Files that belong to a layer's folder but are tooling run by Node, not the layer's code. */
const TOOLING = new Set(['web/build.mjs']);

export interface ImportLine {
  readonly specifier: string;
  readonly line: number;
}

const IMPORT_FORMS = [
  /\bimport\s+(?:type\s+)?[^'"();]*?\bfrom\s*['"]([^'"]+)['"]/g, // import x from '...', import { a,\n b } from '...'
  /\bexport\s+(?:type\s+)?(?:\*|\{[^}]*\})(?:\s+as\s+\w+)?\s*from\s*['"]([^'"]+)['"]/g, // export ... from '...'
  /\bimport\s*['"]([^'"]+)['"]/g, // import '...'
  /\bimport\s*\(\s*['"]([^'"]+)['"]\s*\)/g, // import('...')
];

/** Comments blanked out (newlines kept, so line numbers stay right). */
function withoutComments(text: string): string {
  return text
    .replace(/\/\*[\s\S]*?\*\//g, (c) => c.replace(/[^\n]/g, ' '))
    .replace(/^(\s*)\/\/.*$/gm, (_c, indent: string) => indent);
}

/** Every module specifier a source text imports, with its 1-based line. */
export function importsOf(text: string): ImportLine[] {
  const clean = withoutComments(text);
  const found = new Map<number, ImportLine>();
  for (const form of IMPORT_FORMS) {
    for (const m of clean.matchAll(form)) {
      const at = m.index! + m[0].lastIndexOf(m[1]);
      if (!found.has(at)) found.set(at, { specifier: m[1], line: clean.slice(0, at).split('\n').length });
    }
  }
  return [...found.entries()].sort((a, b) => a[0] - b[0]).map(([, v]) => v);
}

const BUILTINS = new Set(builtinModules);
const isBuiltin = (spec: string): boolean => spec.startsWith('node:') || BUILTINS.has(spec.split('/')[0]);
const packageName = (spec: string): string => spec.startsWith('@') ? spec.split('/').slice(0, 2).join('/') : spec.split('/')[0];

/** Why one import breaks the rules of `layer`, or undefined when it keeps them. */
export function ruleBroken(root: string, file: string, spec: string, layer: Layer): string | undefined {
  if (spec.startsWith('.') || spec.startsWith('/')) {
    const target = relative(root, resolve(dirname(join(root, file)), spec)).split(sep);
    const into = target[0] as Layer;
    if (target[0] === '..' || !(MAY_IMPORT[layer] as readonly string[]).includes(into)) {
      return `${layer} may import only ${MAY_IMPORT[layer].join(', ')}`;
    }
    return undefined;
  }
  if (isBuiltin(spec)) return layer === 'core' || layer === 'web' ? `${layer} may not use Node built-ins` : undefined;
  if (layer === 'core' && !CORE_PACKAGES.includes(packageName(spec))) return `core may use only the packages ${CORE_PACKAGES.join(', ')}`;
  return undefined;
}

function sourceFiles(root: string, dir: string): string[] {
  const out: string[] = [];
  for (const e of readdirSync(join(root, dir), { withFileTypes: true })) {
    const rel = `${dir}/${e.name}`;
    if (e.isDirectory()) out.push(...sourceFiles(root, rel));
    else if (/\.(ts|mts|mjs|js)$/.test(e.name) && !e.name.endsWith('.d.ts') && !e.name.endsWith('.d.mts')) out.push(rel);
  }
  return out;
}

/** Every broken rule in the tree at `root`, as "file:line: imports 'spec' (rule)". */
export function layerViolations(root: string): string[] {
  const out: string[] = [];
  for (const layer of Object.keys(MAY_IMPORT) as Layer[]) {
    for (const file of sourceFiles(root, layer)) {
      if (TOOLING.has(file)) continue;
      for (const { specifier, line } of importsOf(readFileSync(join(root, file), 'utf8'))) {
        const why = ruleBroken(root, file, specifier, layer);
        if (why) out.push(`${file}:${line}: imports '${specifier}' (${why})`);
      }
    }
  }
  return out;
}
