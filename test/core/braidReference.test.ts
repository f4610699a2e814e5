// The braid words and Burau products against a reference computed outside helicord with numpy
// (test/fixtures/braid/make_braid_fixture.py, Debian's python3-numpy; regenerate with
// /usr/bin/python3 test/fixtures/braid/make_braid_fixture.py): the same trajectories, the axis,
// the word and the integer Burau matrix at t = -1 matched exactly; the unit-circle bound from
// numpy's eigenvalues matched to rounding.

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { burauInteger } from '../../core/braid/burauMatrix.js';
import { braidEntropy, unitCircleSample } from '../../core/braid/braidEntropy.js';
import { burauComplex } from '../../core/braid/burauMatrix.js';
import { chooseProjectionAxis } from '../../core/braid/projectionAxis.js';
import { logSpectralRadius } from '../../core/braid/spectralRadius.js';
import type { StrandFrame } from '../../core/braid/strandCrossings.js';
import { braidWord } from '../../core/braid/strandCrossings.js';

interface Case {
  name: string; n: number; axis: number; minGap: number;
  frames: { time: number; x: number[]; y: number[] }[];
  word: [number, 1 | -1][]; burauMinusOne: string[][]; logRhoUnitCircle: number[]; logRhoUnitCircleMax: number;
}
const fixture = JSON.parse(readFileSync(new URL('../fixtures/braid/braid_reference.json', import.meta.url), 'utf8')) as { cases: Case[] };

describe('braid words and Burau products against numpy (test/fixtures/braid/make_braid_fixture.py)', () => {
  for (const c of fixture.cases) {
    it(c.name, () => {
      const frames: StrandFrame[] = c.frames.map((f) => ({ time: f.time, x: f.x, y: f.y, flux: f.x.map(() => 1) }));
      const axis = chooseProjectionAxis(frames);
      expect(axis.angle).toBe(c.axis);
      expect(axis.minGap).toBeCloseTo(c.minGap, 12);
      const word = braidWord(frames, c.axis).map((g) => [g.position, g.sign]);
      expect(word).toEqual(c.word);
      const m = burauInteger(c.n, word.map(([position, sign]) => ({ position, sign: sign as 1 | -1 })));
      expect(m.map(String)).toEqual(c.burauMinusOne.flat());
      // each sample of the circle, then the bound (numpy's eigenvalues against Gelfand's formula)
      const gens = word.map(([position, sign]) => ({ position, sign: sign as 1 | -1 }));
      c.logRhoUnitCircle.forEach((ref, k) => {
        const t = unitCircleSample(k);
        expect(logSpectralRadius(burauComplex(c.n, gens, t.re, t.im))).toBeCloseTo(ref, 8);
      });
      const e = braidEntropy(c.n, gens);
      if (c.n === 3) expect(e.entropy).toBeCloseTo(c.logRhoUnitCircle[64], 10);
      else expect(e.entropy).toBeCloseTo(c.logRhoUnitCircleMax, 8);
    });
  }
  it('holds cases with real tangling', () => {
    expect(fixture.cases.filter((c) => c.logRhoUnitCircleMax > 1).length).toBeGreaterThanOrEqual(4);
  });
});
