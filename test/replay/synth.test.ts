// synth: the demo region as files. FITS frames are checked by fitsverify (Debian's fitsverify,
// the FITS Standard 4.0 checker) where it is installed, and read back through loadFrameFile.
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { mkdtemp, readFile, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadFrameFile } from '../../replay/frameFiles.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { synth } from '../../replay/synthCommand.js';

let dir: string;
beforeAll(async () => { dir = await mkdtemp(join(tmpdir(), 'helicord-synth-')); });
afterAll(async () => { await rm(dir, { recursive: true, force: true }); });

describe('synth', () => {
  it('writes one FITS frame per time that reads back as the demo frame (float32, core frameToFits), and truth.csv', async () => {
    const out = join(dir, 'fits');
    await synth({ out, frames: 5, size: 32, withVelocity: true });
    expect((await readdir(out)).sort()).toEqual(['demo_0000.fits', 'demo_0001.fits', 'demo_0002.fits', 'demo_0003.fits', 'demo_0004.fits', 'truth.csv']);
    const d = demoRegion({ frames: 5, size: 32, withVelocity: true });
    const f = await loadFrameFile(join(out, 'demo_0003.fits'));
    const want = d.frameAt(3);
    expect(f.time).toBe(want.time);
    expect([f.nx, f.ny]).toEqual([32, 32]);
    expect(f.dx).toBeCloseTo(want.dx, 12);
    for (const k of [0, 17, 500, 1023]) {
      expect(f.bn[k]).toBe(Math.fround(want.bn[k]));
      expect(f.vx![k]).toBe(Math.fround(want.vx![k]));
      expect(f.vy![k]).toBe(Math.fround(want.vy![k]));
    }
    const truth = (await readFile(join(out, 'truth.csv'), 'utf8')).trim().split('\n');
    expect(truth).toHaveLength(6);
    expect(truth[0]).toMatch(/^time,dt_s,rate_total,rate_spin,rate_orbit,rate_background,budget_total,budget_spin,budget_orbit/);
    expect(Number(truth[4].split(',')[2])).toBe(d.truthAt(3).total);
  });

  it('passes fitsverify with no errors and no warnings', async (ctx) => {
    const tool = ['/usr/bin/fitsverify', '/usr/local/bin/fitsverify'].find((p) => existsSync(p));
    if (!tool) { console.warn('skipped: fitsverify is not installed'); ctx.skip(); }
    const file = join(dir, 'fits', 'demo_0002.fits');
    const text = execFileSync(tool!, [file], { encoding: 'utf8' });
    expect(text).toMatch(/\*\*\*\* Verification found 0 warning\(s\) and 0 error\(s\). \*\*\*\*/);
  });

  it('writes JSON frames on request, without velocity unless asked', async () => {
    const out = join(dir, 'json');
    await synth({ out, frames: 3, size: 16, format: 'json' });
    const f = await loadFrameFile(join(out, 'demo_0001.json'));
    expect(f.vx).toBeUndefined();
    const want = demoRegion({ frames: 3, size: 16 }).frameAt(1);
    expect(Math.abs(f.bn[40] - want.bn[40])).toBeLessThanOrEqual(0.0005 + 1e-9);
    await expect(synth({ out, frames: 2, size: 8, format: 'xml' as 'json' })).rejects.toThrow(/format: must be fits or json/);
  });
});
