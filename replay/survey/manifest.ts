// The manifest of a survey: one row per region, in CSV with a header line naming the columns
// `region`, `frames` and, optionally, `config`:
//
//   region,frames,config
//   ar-0412,/archive/ar-0412/
//   ar-0413,/archive/ar-0413/*.Br.fits,lct.json
//
// `frames` is a folder of frame files or a file pattern (`*` and `?` in its last part); `config` a
// config file for that region, used instead of the survey's (replay/batchConfig.ts). Relative paths are taken from the
// manifest's folder by the caller. Blank lines and lines starting with `#` are left out; a cell
// may be quoted ("a,b") to hold a comma. Pure: text in, rows out; a problem is an InputError
// naming the manifest, the line and the column.

import { InputError } from '../../core/inputError.js';

export interface ManifestRow {
  /** The region's name: 1 to 64 of A-Z a-z 0-9 _ - (it names the result files). */
  readonly name: string;
  /** A folder of frame files, or a pattern of file names. */
  readonly frames: string;
  /** A config file for this region, used instead of the survey's. */
  readonly config?: string;
  /** Line in the manifest (1-based). */
  readonly line: number;
}

const REGION_NAME = /^[A-Za-z0-9_-]{1,64}$/;
const COLUMNS = ['region', 'frames', 'config'] as const;

/** The cells of one CSV line (double quotes group, "" is a quote). */
function cells(line: string, source: string, n: number): string[] {
  const out: string[] = [];
  let cell = '', quoted = false, i = 0;
  while (i < line.length) {
    const c = line[i];
    if (quoted) {
      if (c === '"' && line[i + 1] === '"') { cell += '"'; i += 2; continue; }
      if (c === '"') { quoted = false; i++; continue; }
      cell += c; i++; continue;
    }
    if (c === '"' && cell.trim() === '') { quoted = true; cell = ''; i++; continue; }
    if (c === ',') { out.push(cell.trim()); cell = ''; i++; continue; }
    cell += c; i++;
  }
  if (quoted) throw new InputError(source, `line ${n}`, 'a quoted cell is not closed');
  out.push(cell.trim());
  return out;
}

export function parseManifest(text: string, source: string): ManifestRow[] {
  const lines = text.split(/\r?\n/).map((l, i) => ({ text: l, n: i + 1 })).filter((l) => l.text.trim() !== '' && !l.text.trimStart().startsWith('#'));
  if (lines.length === 0) throw new InputError(source, '(manifest)', 'is empty: it needs a header line "region,frames,config" and one line per region');
  const header = cells(lines[0].text, source, lines[0].n).map((h) => h.toLowerCase());
  for (const h of header) {
    if (!(COLUMNS as readonly string[]).includes(h)) throw new InputError(source, `line ${lines[0].n}`, `"${h}" is not a column (the columns are ${COLUMNS.join(', ')})`);
  }
  for (const need of ['region', 'frames']) {
    if (!header.includes(need)) throw new InputError(source, `line ${lines[0].n}`, `the header has no "${need}" column (it reads "${lines[0].text.trim()}")`);
  }
  if (new Set(header).size !== header.length) throw new InputError(source, `line ${lines[0].n}`, 'a column is named twice');
  const rows: ManifestRow[] = [];
  const seen = new Map<string, number>();
  for (const { text, n } of lines.slice(1)) {
    const c = cells(text, source, n);
    if (c.length > header.length) throw new InputError(source, `line ${n}`, `has ${c.length} cells, the header ${header.length}`);
    const get = (col: string) => c[header.indexOf(col)] ?? '';
    const name = get('region');
    if (!REGION_NAME.test(name)) throw new InputError(source, `line ${n}`, `${JSON.stringify(name)} is not a region name: 1 to 64 of A-Z a-z 0-9 _ -`);
    const first = seen.get(name);
    if (first !== undefined) throw new InputError(source, `line ${n}`, `region ${name} is already on line ${first}`);
    seen.set(name, n);
    const frames = get('frames');
    if (frames === '') throw new InputError(source, `line ${n}`, `region ${name} has no frames (a folder or a file pattern)`);
    const config = header.includes('config') ? get('config') : '';
    rows.push({ name, frames, ...(config !== '' && { config }), line: n });
  }
  if (rows.length === 0) throw new InputError(source, '(manifest)', 'lists no region');
  return rows;
}
