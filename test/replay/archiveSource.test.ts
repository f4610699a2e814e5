// Archives on disk: time order whatever the names, duplicates and other grids set aside with
// their reasons, frames read back one at a time.
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { frameToJson } from '../../core/frameJson.js';
import { orderArchive } from '../../replay/archiveOrder.js';
import { listFrameFiles, openArchive } from '../../replay/archiveSource.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';

const g = { nx: 8, ny: 8, dx: 0.5, dy: 0.5 };
const f = (file: string, time: number, grid = g) => ({ file, time, ...grid, hasVelocity: false });

describe('orderArchive', () => {
  it('orders by time, keeps the first name of a duplicated time, sets aside other grids', () => {
    const idx = orderArchive([
      f('c.json', 30), f('a.json', 20), f('b.json', 10), f('d.json', 20),
      f('e.json', 40, { ...g, nx: 16 }), { file: 'x.json', reason: 'bn: is missing' },
    ]);
    expect(idx.entries.map((e) => e.file)).toEqual(['b.json', 'a.json', 'c.json']);
    expect(idx.grid).toEqual(g);
    expect(idx.skipped.map((s) => s.file)).toEqual(['d.json', 'e.json', 'x.json']);
    expect(idx.skipped[0].reason).toMatch(/same time 1970-01-01T00:00:00.020Z as a.json/);
    expect(idx.skipped[1].reason).toMatch(/grid is 16x8 pixels of 0.5x0.5 Mm, not the archive's 8x8/);
    expect(idx.reordered).toEqual(['b.json', 'a.json']);
  });

  it('takes the grid most frames share, not the first one', () => {
    const idx = orderArchive([f('a', 1, { ...g, dx: 1 }), f('b', 2), f('c', 3)]);
    expect(idx.grid).toEqual(g);
    expect(idx.entries.map((e) => e.file)).toEqual(['b', 'c']);
  });
});

describe('openArchive', () => {
  let dir: string;
  beforeAll(async () => { dir = await mkdtemp(join(tmpdir(), 'helicord-archive-')); });
  afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

  it('lists frame files only, and reads frames back in time order', async () => {
    const d = demoRegion({ size: 16, frames: 4 });
    await writeFile(join(dir, 'late.json'), JSON.stringify(frameToJson(d.frameAt(0))));
    await writeFile(join(dir, 'early.json'), JSON.stringify(frameToJson(d.frameAt(3))));
    await writeFile(join(dir, 'mid.json'), JSON.stringify(frameToJson(d.frameAt(1))));
    await writeFile(join(dir, 'notes.txt'), 'not a frame');
    await writeFile(join(dir, 'broken.json'), '[1, 2');
    expect((await listFrameFiles(dir)).map((p) => p.split('/').pop())).toEqual(['broken.json', 'early.json', 'late.json', 'mid.json']);
    const a = await openArchive(dir);
    expect(a.entries.map((e) => e.file.split('/').pop())).toEqual(['late.json', 'mid.json', 'early.json']);
    expect(a.entries.map((e) => e.time)).toEqual([d.timeAt(0), d.timeAt(1), d.timeAt(3)]);
    expect(a.skipped).toHaveLength(1);
    expect(a.skipped[0].reason).toMatch(/not valid JSON/);
    const seen: number[] = [];
    for await (const { frame, index } of a.frames(1)) { seen.push(index); expect(frame.time).toBe(a.entries[index].time); }
    expect(seen).toEqual([1, 2]);
    await expect(a.frame(3)).rejects.toThrow(/outside 0..2/);
  });
});
