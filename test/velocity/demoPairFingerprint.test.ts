// Same numbers through speed work: analyseFrame on the 512^2 demo pair with inferred velocities
// (DAVE, footpoints, the label split, the motion uncertainty: the defaults), and the inferred
// velocity of the pair alone, against the figures of the build before the speed work on velocity
// inference, footpoints and the label split (commit b7f49f6; written by this file with
// HELICORD_WRITE_FINGERPRINT=1). Every number of the sample and of the footpoint table (spins,
// orbits, motions, budgets) must agree to 1e-12 relative; maps are compared through weighted sums
// and NaN counts, so a change at any pixel shows, and those of the velocities and the labels (no
// FFT in them) must be bit-identical. A regression check, not an outside reference: those are in
// test/core/scipyReference.test.ts and test/velocity/*.
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { createAffineFitWorkspace } from '../../core/velocity/fitWindowPasses.js';
import { inferVelocity } from '../../core/velocity/inferVelocity.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';

const FIXTURE = new URL('../fixtures/velocity/demo_pair_512_fingerprint.json', import.meta.url);

/** Weighted sums of a map's finite values (weights cycling over primes, so a moved value shows) and its NaN count. */
function mapPrint(map: ArrayLike<number>): { sum: number; weighted: number; squares: number; nan: number } {
  let sum = 0, weighted = 0, squares = 0, nan = 0;
  for (let i = 0; i < map.length; i++) {
    const v = map[i];
    if (!Number.isFinite(v)) { nan++; continue; }
    sum += v; weighted += v * ((i % 97) + (i % 89) + 1); squares += v * v;
  }
  return { sum, weighted, squares, nan };
}

function fingerprint(): Record<string, unknown> {
  const region = demoRegion({ frames: 2, size: 512, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
  const cache = new Map();
  const first = analyseFrame(region.frameAt(0), {}, {}, cache);
  const r = analyseFrame(region.frameAt(1), first.state, {}, cache);
  const fp = r.footpoints!;
  // The inferred field itself (the rate's velocity takes it only where no footpoint moves).
  const v = inferVelocity(region.frameAt(0), region.frameAt(1));
  return {
    inferred: { vx: mapPrint(v.vx), vy: mapPrint(v.vy), validFraction: v.validFraction },
    sample: r.sample,
    footpoints: fp.footpoints,
    pairs: fp.pairs,
    budget: fp.state.budget,
    maps: Object.fromEntries(Object.entries(r.maps).map(([k, v]) => [k, mapPrint(v as ArrayLike<number>)])),
  };
}

/** Leaves of a JSON value with their paths (numbers, strings, booleans, null). */
function leaves(v: unknown, path = '', out = new Map<string, unknown>()): Map<string, unknown> {
  if (v !== null && typeof v === 'object') {
    for (const [k, x] of Object.entries(v as Record<string, unknown>)) leaves(x, `${path}.${k}`, out);
  } else out.set(path, v);
  return out;
}

/**
 * The velocity and label maps involve no FFT: their sums must be bit-identical (the FFT-based
 * figures may move at 1e-16 with a change of transform).
 */
const EXACT = /^\.(maps\.(vx|vy|vz|labels)|inferred)\./;

const roundTrip = (v: unknown) => JSON.parse(JSON.stringify(v, (_k, x) => (typeof x === 'number' && !Number.isFinite(x) ? String(x) : x)));

describe('analyseFrame on the 512^2 demo pair keeps its numbers', () => {
  it('sample, footpoint table and maps agree with the stored figures to 1e-12 relative', () => {
    const now = roundTrip(fingerprint());
    if (process.env.HELICORD_WRITE_FINGERPRINT === '1') writeFileSync(FIXTURE, JSON.stringify(now, null, 1));
    expect(existsSync(FIXTURE)).toBe(true);
    const stored = leaves(JSON.parse(readFileSync(FIXTURE, 'utf8')));
    const got = leaves(now);
    expect([...got.keys()].sort()).toEqual([...stored.keys()].sort());
    // The background is a difference of totals near 1e37: judged against the total.
    const total = Math.abs((now as { sample: { total: number } }).sample.total);
    const off: string[] = [];
    for (const [key, want] of stored) {
      const have = got.get(key);
      if (typeof want === 'number' && typeof have === 'number' && EXACT.test(key)) {
        if (!Object.is(have, want)) off.push(`${key}: ${have} against ${want} (must be bit-identical)`);
      } else if (typeof want === 'number' && typeof have === 'number') {
        const scale = Math.max(Math.abs(want), Math.abs(have), /background/i.test(key) ? total : 0);
        if (!(Math.abs(have - want) <= 1e-12 * scale)) off.push(`${key}: ${have} against ${want}`);
      } else if (have !== want) off.push(`${key}: ${String(have)} against ${String(want)}`);
    }
    expect(off).toEqual([]);
  });

  it('the inferred velocity through the affine fit\'s SIMD kernels (a kept workspace, used twice) prints the same bit for bit', () => {
    const region = demoRegion({ frames: 2, size: 512, withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
    const stored = JSON.parse(readFileSync(FIXTURE, 'utf8')) as { inferred: Record<string, unknown> };
    const workspace = createAffineFitWorkspace();
    for (let call = 0; call < 2; call++) {
      const v = inferVelocity(region.frameAt(0), region.frameAt(1), {}, workspace);
      expect(workspace.arena).toBeDefined();
      const now = roundTrip({ vx: mapPrint(v.vx), vy: mapPrint(v.vy), validFraction: v.validFraction });
      const off = [...leaves(stored.inferred)].filter(([k, want]) => !Object.is(leaves(now).get(k), want));
      expect(off).toEqual([]);
    }
  });
});
