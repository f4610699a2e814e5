import { mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { importsOf, layerViolations } from './importRules.js';

const repo = fileURLToPath(new URL('../../', import.meta.url));

describe('layering (DEVELOPERS.md, Layout)', () => {
  it('the repository keeps the import rules', () => {
    expect(layerViolations(repo)).toEqual([]);
  });

  it('reads every import form, with its line, and not commented-out ones', () => {
    const text = [
      "import { a,",
      "  b } from './a.js';",
      "import type { T } from '../core/t.js';",
      "import './side.js';",
      "export { c } from './c.js';",
      "export * from './d.js';",
      "// import { x } from '../server/x.js';",
      "/* import y from 'node:fs'; */",
      "const m = await import('./lazy.js');",
      "const s = 'import from here';",
    ].join('\n');
    expect(importsOf(text)).toEqual([
      { specifier: './a.js', line: 2 },
      { specifier: '../core/t.js', line: 3 },
      { specifier: './side.js', line: 4 },
      { specifier: './c.js', line: 5 },
      { specifier: './d.js', line: 6 },
      { specifier: './lazy.js', line: 9 },
    ]);
  });

  it('names each broken rule in a tree that breaks them', () => {
    const root = mkdtempSync(join(tmpdir(), 'layering-'));
    const put = (file: string, text: string) => {
      mkdirSync(join(root, file, '..'), { recursive: true });
      writeFileSync(join(root, file), text);
    };
    put('core/a.ts', "import { s } from '../server/s.js';\nimport { readFileSync } from 'node:fs';\nimport { inflateSync } from 'fflate';\nimport { format } from 'date-fns';\nimport { b } from './b.js';\n");
    put('core/b.ts', 'export const b = 1;\n');
    put('replay/r.ts', "import { s } from '../server/s.js';\nimport { a } from '../core/a.js';\nimport { readFile } from 'node:fs/promises';\n");
    put('server/s.ts', "import { r } from '../replay/r.js';\nimport { m } from '../web/main.js';\nimport express from 'express';\n");
    put('web/main.ts', "import { r } from '../replay/r.js';\nimport { join } from 'path';\nimport { Chart } from 'chart.js';\nimport { a } from '../core/a.js';\n");
    put('web/build.mjs', "import { build } from 'esbuild';\nimport { join } from 'node:path';\n");
    expect(layerViolations(root).sort()).toEqual([
      "core/a.ts:1: imports '../server/s.js' (core may import only core)",
      "core/a.ts:2: imports 'node:fs' (core may not use Node built-ins)",
      "core/a.ts:4: imports 'date-fns' (core may use only the packages fflate)",
      "replay/r.ts:1: imports '../server/s.js' (replay may import only replay, core)",
      "server/s.ts:2: imports '../web/main.js' (server may import only server, core, replay)",
      "web/main.ts:1: imports '../replay/r.js' (web may import only web, core)",
      "web/main.ts:2: imports 'path' (web may not use Node built-ins)",
    ]);
  });
});
