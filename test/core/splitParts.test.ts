// The label split dealt to parts (core/labelSplit.ts splitPart / joinSplitParts): the parts of
// one split, joined in any order, give the one-part split bit for bit, in every regime (pairs
// complete, pairs cut by the budget, large footpoints beyond maxFullRows with box spins, every
// footpoint convolved, none convolved); each sum is made in one part only. The one-part split is
// itself checked against the definition's double sum in labelSplit.test.ts.
import { describe, expect, it } from 'vitest';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import type { LabelSplit } from '../../core/labelSplit.js';
import { dealWork, joinSplitParts, splitByLabels, splitPart } from '../../core/labelSplit.js';
import { seededRandom } from '../support/random.js';

function sameBits(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

function expectSameSplit(joined: LabelSplit, whole: LabelSplit): void {
  expect(joined.ids).toEqual(whole.ids);
  expect(sameBits(joined.spin, whole.spin)).toBe(true);
  expect(sameBits(joined.orbit, whole.orbit)).toBe(true);
  expect([joined.spinTotal, joined.orbitTotal, joined.background, joined.total]).toEqual([whole.spinTotal, whole.orbitTotal, whole.background, whole.total]);
  expect(joined.pairsComplete).toBe(whole.pairsComplete);
  expect(joined.convolvedFootpoints).toBe(whole.convolvedFootpoints);
  expect(joined.labelledField === undefined).toBe(whole.labelledField === undefined);
  if (whole.labelledField) {
    expect(sameBits(joined.labelledField!.p, whole.labelledField.p)).toBe(true);
    expect(sameBits(joined.labelledField!.q, whole.labelledField.q)).toBe(true);
  }
}

describe('label split in parts', () => {
  // Nine blobs of different sizes on a 48x40 grid, with a random velocity: some footpoints large
  // enough for their own convolution under the default costs.
  const nx = 48, ny = 40, d = 0.4;
  const r = seededRandom(7);
  const bn = new Float64Array(nx * ny), vx = new Float64Array(nx * ny), vy = new Float64Array(nx * ny);
  const labels = new Int32Array(nx * ny);
  const blobs = Array.from({ length: 9 }, (_, j) => ({ x: 5 + 38 * r(), y: 5 + 30 * r(), s: 1 + 3 * r() * (j < 3 ? 2 : 1), sign: j % 2 ? -1 : 1 }));
  for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
    const i = y * nx + x;
    let best = 0, bestField = 0;
    blobs.forEach((b, j) => {
      const f = b.sign * 1200 * Math.exp(-((x - b.x) ** 2 + (y - b.y) ** 2) / (2 * b.s * b.s));
      bn[i] += f;
      if (Math.abs(f) > 60 && Math.abs(f) > Math.abs(bestField)) { best = j + 1; bestField = f; }
    });
    bn[i] += 5 * (r() - 0.5);
    labels[i] = best;
    vx[i] = r() - 0.5; vy[i] = r() - 0.5;
  }
  const frame = { time: 0, nx, ny, dx: d, dy: d, bn, vx, vy };
  const kernel = createFluxKernel(frame);
  const t = fluxTransport(frame);
  const total = 3.25e36;

  const regimes: [string, Parameters<typeof splitByLabels>[3]][] = [
    ['default costs', {}],
    ['pairs cut by the budget', { pairBudget: 2000 }],
    ['large footpoints beyond maxFullRows (box spins)', { directPairsPerPaddedPixel: 0.05, maxFullRows: 2 }],
    ['every footpoint convolved', { directPairsPerPaddedPixel: 0 }],
    ['every footpoint convolved, rows by box pair sums', { directPairsPerPaddedPixel: 0, rows: 'boxes' }],
    ['every footpoint convolved, rows over the whole grid', { directPairsPerPaddedPixel: 0, rows: 'grid' }],
    ['none convolved', { directPairsPerPaddedPixel: Infinity, pairBudget: Infinity }],
  ];
  for (const [name, options] of regimes) {
    it(`${name}: 2 and 3 parts joined in any order equal the one-part split bit for bit`, () => {
      const whole = splitByLabels(kernel, t, labels, { ...options, total });
      expect(whole.ids.length).toBe(9);
      for (const of of [2, 3]) {
        const otherWork = [0, 0, 1].slice(3 - of);
        const parts = Array.from({ length: of }, (_, part) => splitPart(kernel, t, labels, options!, { part, of, ...(of === 3 && { otherWork }) }));
        expectSameSplit(joinSplitParts([...parts].reverse(), total), whole);
        // Each part did some of the work, unless there was less work than parts.
        const did = parts.map((p) => (p.didDirect ? 1 : 0) + p.didSource.reduce((s, v) => s + v, 0) + (p.labelledSum !== undefined ? 1 : 0));
        const items = (whole.convolvedFootpoints > 0 ? whole.convolvedFootpoints : 0) + (parts.some((p) => p.didDirect) ? 1 : 0) + (whole.pairsComplete ? 0 : 1);
        expect(did.reduce((s, v) => s + v, 0)).toBe(items);
        // Without other work, every part gets some when there are enough items.
        if (of === 2 && items >= of) expect(did.every((v) => v > 0)).toBe(true);
      }
    });
  }

  it('a missing part is noticed when the labelled sum is needed; a bad share is refused', () => {
    const options = { pairBudget: 2000 };
    const parts = [0, 1].map((part) => splitPart(kernel, t, labels, options, { part, of: 2 }));
    const without = parts.filter((p) => p.labelledSum === undefined);
    expect(() => joinSplitParts(without, total)).toThrow(/no part made the labelled sum/);
    expect(() => splitPart(kernel, t, labels, options, { part: 2, of: 2 })).toThrow(/0 <= part < of/);
  });

  it('work is dealt largest first to the least loaded part', () => {
    expect(dealWork([1, 1, 0.3, 0.2], 2)).toEqual([0, 1, 0, 1]);
    expect(dealWork([0.2, 3, 1, 1, 1], 2)).toEqual([0, 0, 1, 1, 1]); // 3 | 1 1 1, then 0.2 to the first of two equal loads
    expect(dealWork([5, 4, 3], 1)).toEqual([0, 0, 0]);
    // A part that starts with other work gets less: 1 0.3 | 1 0.2 becomes 1 1 | 0.3 0.2 (from 1).
    expect(dealWork([1, 1, 0.3, 0.2], 2, [0, 1])).toEqual([0, 0, 1, 1]);
  });
});
