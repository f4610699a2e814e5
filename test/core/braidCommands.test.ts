// The braid where users see it from the command line: `helicord rate` over a frame sequence
// prints the braid of the largest footpoints (docs/braids.md) after the last frame. One period of
// the golden protocol (Boyland, Aref & Stremler 2000) as B-only frames of Gaussian spots.

import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { frameToJson } from '../../core/frameJson.js';
import { main } from '../../server/cli.js';
import { sceneFrame } from '../footpoints/scene.js';
import { exchangeFrames, GOLDEN, GOLDEN_ENTROPY } from './braidProtocols.js';

function capture(): { stream: Writable; text: () => string } {
  let s = '';
  return { stream: new Writable({ write(c, _e, cb) { s += c.toString(); cb(); } }), text: () => s };
}

describe('helicord rate: the braid of a frame sequence', () => {
  const dir = mkdtempSync(join(tmpdir(), 'helicord-braid-'));
  const grid = { nx: 64, ny: 64, dx: 0.36, dy: 0.36 };
  const points = exchangeFrames(3, GOLDEN, 1, { spacing: 4, rest: 1 });
  const files = points.map((p, f) => {
    const spots = Array.from({ length: 3 }, (_, k) => ({ x: 7.5 + p.x[k], y: 11.5 + p.y[k], a: 0.8, b: 0.8, angle: 0, peak: 1500 }));
    const file = join(dir, `f${String(f).padStart(2, '0')}.json`);
    writeFileSync(file, JSON.stringify(frameToJson(sceneFrame(grid, p.time, spots, 8, 50 + f))));
    return file;
  });
  const config = (name: string, body: unknown) => { const file = join(dir, name); writeFileSync(file, JSON.stringify(body)); return file; };

  it('prints the run, the segment with its triples and the window with its word', async () => {
    const out = capture(), err = capture();
    expect(await main(['rate', ...files], out.stream, err.stream)).toBe(0);
    const r = JSON.parse(out.text()) as { braid: { strands: number[]; run: { entropy: number; segments: number; exact: boolean }; segment: { method: string; generators: number; triples: { flagged: boolean; pairCrossings: number[] }[] }; window: { word: { position: number; sign: number }[] } } };
    expect(r.braid.strands).toHaveLength(3);
    expect(r.braid.run.segments).toBe(1);
    expect(r.braid.run.entropy).toBeCloseTo(GOLDEN_ENTROPY, 9);
    expect(r.braid.run.exact).toBe(true);
    expect(r.braid.segment.method).toBe('burau-sl2z');
    expect(r.braid.segment.generators).toBe(2);
    // one period is not pure: not flagged
    expect(r.braid.segment.triples[0].flagged).toBe(false);
    expect(r.braid.window.word.map((g) => g.sign).sort()).toEqual([-1, 1]);
  });
  it('takes its settings from the config file\'s braid section, and names a bad one', async () => {
    const two = capture();
    expect(await main(['rate', ...files.slice(0, 6), '--config', config('two.json', { braid: { strands: 2 } })], two.stream, capture().stream)).toBe(0);
    expect(JSON.parse(two.text()).braid.strands).toHaveLength(2);
    const err = capture();
    expect(await main(['rate', ...files.slice(0, 2), '--config', config('bad.json', { braid: { strands: 1 } })], capture().stream, err.stream)).toBe(1);
    expect(err.text()).toMatch(/bad\.json: braid\.strands/);
  });
});
