// Where a result came from: the helicord version (package.json), a digest of the settings, and the
// SHA-256 of every input file read.

import { createHash } from 'node:crypto';
import { createReadStream, existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

/** helicord's version from its package.json (found above this module, in the sources or in dist/). */
export function helicordVersion(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (;;) {
    const p = join(dir, 'package.json');
    if (existsSync(p)) {
      const pkg = JSON.parse(readFileSync(p, 'utf8')) as { name?: string; version?: string };
      if (pkg.name === 'helicord' && typeof pkg.version === 'string') return pkg.version;
    }
    const up = dirname(dir);
    if (up === dir) throw new Error('helicord\'s package.json was not found above ' + fileURLToPath(import.meta.url));
    dir = up;
  }
}

/** JSON with object keys in sorted order, so that equal settings give equal text. */
export function canonicalJson(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(canonicalJson).join(',')}]`;
  if (v !== null && typeof v === 'object') {
    return `{${Object.keys(v).sort().filter((k) => (v as Record<string, unknown>)[k] !== undefined)
      .map((k) => `${JSON.stringify(k)}:${canonicalJson((v as Record<string, unknown>)[k])}`).join(',')}}`;
  }
  return JSON.stringify(v) ?? 'null';
}

export function sha256Text(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

/** SHA-256 of a file's bytes, hex. */
export function sha256File(path: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const h = createHash('sha256');
    createReadStream(path).on('error', reject).on('data', (d) => h.update(d)).on('end', () => resolve(h.digest('hex')));
  });
}
