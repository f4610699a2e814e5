// The Targets of issue 11, asserted on a subset of the accuracy suite (default settings, 8 G
// noise, cadences 720 s and 45 s, 5 noise realisations, samples from the third frame on).
// PENDING: the file is named *.pending.ts so that `npm test` does not collect it; rename it to
// targets.test.ts once the methods meet the targets. Until then run it on its own with
//   npx vitest run --config test/accuracy/vitest.pending.config.ts
//
// Tolerances: each target is the figure plus the statistical uncertainty of what five
// realisations can show. A mean error is allowed the target plus two standard errors of that
// mean (the measured scatter over sqrt(n), n counting only samples of pairs that share no frame).
// A reported 1-sigma must lie within a factor 1.5 of the true scatter; the measured scatter itself
// is off by the factor s/sigma, within scatterRange(dof) at 95 %, so the observed ratio is allowed
// [1 / (1.5 hi), 1.5 / lo].
import { describe, expect, it } from 'vitest';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Mode, RunRecord, Sequence } from './runScene.js';
import { prepareSequence, runSequence } from './runScene.js';
import { sceneByName } from './scenes.js';
import type { CellSummary } from './summary.js';
import { FIRST_COMPARED_PAIR, scatterRange, std, summariseCell } from './summary.js';

const NOISE_G = 8;
const REALISATIONS = 5;
const CADENCES = [720, 45];
const cache: FluxKernelCache = new Map();

interface Cell { seq: Sequence; runs: RunRecord[]; summary: CellSummary }

function cell(name: string, cadenceS: number, mode: Mode = 'los'): Cell {
  const seq = prepareSequence(sceneByName(name), cadenceS, 5, cache);
  const runs = Array.from({ length: REALISATIONS }, (_, r) => runSequence(seq, mode, NOISE_G, 'auto', r, cache, { keepFootpoints: true }));
  return { seq, runs, summary: summariseCell(seq, runs) };
}

interface Row { value: number; truth: number; denominator: number }

/**
 * Values of a sample field on the compared samples, with the truth of each and what its error is
 * measured against (the truth itself by default).
 */
function compared(
  c: Cell, read: (values: Readonly<Record<string, number | null>>) => number | null | undefined,
  truth: (pair: number) => number, denominator: (pair: number) => number = truth,
): Row[] {
  const rows: Row[] = [];
  for (const run of c.runs) for (const s of run.samples) {
    if (s.pair < FIRST_COMPARED_PAIR) continue;
    const v = read(s.values);
    if (typeof v === 'number') rows.push({ value: v, truth: truth(s.pair), denominator: denominator(s.pair) });
  }
  return rows;
}

/** Samples that share no frame: every other pair from the first compared one. */
function independentCount(c: Cell): number {
  const pairs = new Set(c.runs.flatMap((r) => r.samples.map((s) => s.pair)).filter((p) => p >= FIRST_COMPARED_PAIR));
  return REALISATIONS * Math.ceil(pairs.size / 2);
}

/** Mean of (value - truth) / |denominator| and two standard errors of it. */
function meanError(c: Cell, rows: Row[]) {
  expect(rows.length, 'no compared sample carried the value').toBeGreaterThan(0);
  const e = rows.map((r) => (r.value - r.truth) / Math.abs(r.denominator));
  const m = e.reduce((s, x) => s + x, 0) / e.length;
  return { mean: m, twoSE: e.length > 1 ? (2 * std(e)) / Math.sqrt(independentCount(c)) : 0 };
}

function expectSigmaWithinFactor(c: Cell, factor = 1.5): void {
  expect(c.summary.sigma.length, 'no 1-sigma fields on the samples').toBeGreaterThan(0);
  for (const s of c.summary.sigma) {
    if (s.negligible) continue;
    const { lo, hi } = scatterRange(s.dof);
    const where = `${c.summary.scene} ${c.summary.cadenceS} s ${s.field}: reported ${s.sigma.toExponential(2)}, scatter ${s.scatter.toExponential(2)}`;
    expect(s.ratio, where).toBeGreaterThanOrEqual(1 / (factor * hi));
    expect(s.ratio, where).toBeLessThanOrEqual(factor / lo);
  }
}

describe.each(CADENCES)('issue 11 targets at %i s cadence, 8 G, default settings, B only', (cadenceS) => {
  for (const name of ['translate-0.3', 'circle-15dph-20px']) {
    it(`${name}: total within 5 % of the true-motion G_theta; spurious spin below 5 % of the orbit term; 1-sigma within 1.5 of the scatter`, () => {
      const c = cell(name, cadenceS);
      expect(c.summary.errors).toEqual([]);
      const total = meanError(c, compared(c, (v) => v.total, (p) => c.seq.truths[p - 1].total));
      expect(Math.abs(total.mean)).toBeLessThanOrEqual(0.05 + total.twoSE);
      // These spots only move: their true spin is 0 (FFT rounding), so any spin is spurious. A
      // null spin (round footpoints: unobservable, said so) puts none on them.
      const spinRows = compared(c, (v) => v.spin, () => 0, (p) => c.seq.truths[p - 1].orbit);
      if (spinRows.length > 0) {
        const spin = meanError(c, spinRows);
        expect(Math.abs(spin.mean)).toBeLessThanOrEqual(0.05 + spin.twoSE);
      }
      expectSigmaWithinFactor(c);
    });
  }

  it('turn-ar1.3-2dph: the spin of an elongated spot (axis ratio 1.3) turning at 2 deg/h within 10 % from the third frame on', () => {
    const c = cell('turn-ar1.3-2dph', cadenceS);
    expect(c.summary.errors).toEqual([]);
    const spin = meanError(c, compared(c, (v) => v.spin, (p) => c.seq.truths[p - 1].spin));
    expect(Math.abs(spin.mean)).toBeLessThanOrEqual(0.1 + spin.twoSE);
    // The same from the footpoint table: the footpoint on the turning spot carries that spin.
    expect(c.summary.turning!.error).not.toBeNull();
    expect(Math.abs(c.summary.turning!.error!)).toBeLessThanOrEqual(0.1 + spin.twoSE);
    expectSigmaWithinFactor(c);
  });

  it('turn-among-others: the turning spot\'s spin within 10 % beside a static spot, a moving spot and diffuse flux', () => {
    const c = cell('turn-among-others', cadenceS);
    expect(c.summary.errors).toEqual([]);
    expect(c.summary.turning!.error).not.toBeNull();
    // Its standard error is taken from the scatter of the sample's spin, which holds the turning spot's.
    const spin = meanError(c, compared(c, (v) => v.spin, (p) => c.seq.truths[p - 1].spins['turning+']));
    expect(Math.abs(c.summary.turning!.error!)).toBeLessThanOrEqual(0.1 + spin.twoSE);
    expectSigmaWithinFactor(c);
  });

  it('rigid-ar1.6: a flux-balanced bipole turning rigidly, |total| below 10 % of its orbit term', () => {
    const c = cell('rigid-ar1.6', cadenceS);
    expect(c.summary.errors).toEqual([]);
    const total = meanError(c, compared(c, (v) => v.total, () => 0, (p) => c.seq.truths[p - 1].orbit));
    expect(Math.abs(total.mean)).toBeLessThanOrEqual(0.1 + total.twoSE);
    expectSigmaWithinFactor(c);
  });
});

describe.each(CADENCES)('issue 11 targets at %i s cadence, 8 G, default settings, with bx, by', (cadenceS) => {
  it('emerging-twisted: emergence and shear each within 15 %', () => {
    const c = cell('emerging-twisted', cadenceS, 'vector');
    expect(c.summary.errors).toEqual([]);
    for (const part of ['emergence', 'shear'] as const) {
      const e = meanError(c, compared(c, (v) => v[part], (p) => c.seq.truths[p - 1][part]!));
      expect(Math.abs(e.mean), part).toBeLessThanOrEqual(0.15 + e.twoSE);
    }
    expectSigmaWithinFactor(c);
  });

  it('rising-twisted: the emergence of twist within 15 %, and no shear where v_t = 0 (below 15 % of the emergence)', () => {
    const c = cell('rising-twisted', cadenceS, 'vector');
    expect(c.summary.errors).toEqual([]);
    const e = meanError(c, compared(c, (v) => v.emergence, (p) => c.seq.truths[p - 1].emergence!));
    expect(Math.abs(e.mean)).toBeLessThanOrEqual(0.15 + e.twoSE);
    const s = meanError(c, compared(c, (v) => v.shear, () => 0, (p) => c.seq.truths[p - 1].emergence!));
    expect(Math.abs(s.mean)).toBeLessThanOrEqual(0.15 + s.twoSE);
    expectSigmaWithinFactor(c);
  });
});
