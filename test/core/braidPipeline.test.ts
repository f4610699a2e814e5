// The point-footpoint protocols of test/core/braidEntropy.test.ts as B-only frames of Gaussian
// spots with 8 G noise, through the whole per-frame step (core/frameAnalysis.ts: velocity inferred
// between frames, footpoints segmented and tracked at the mid-time frames), then the braid fold on
// the tracked footpoints: the same entropy within 5 % (Boyland, Aref & Stremler 2000 for the
// golden protocol). Small frames (64 x 64 pixels of 0.36 Mm) at a 10-minute cadence.

import { describe, expect, it } from 'vitest';
import { analyseFrame, type AnalysisState } from '../../core/frameAnalysis.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { braidInputFromFootpoints } from '../../core/braid/braidInput.js';
import type { BraidReport, BraidState } from '../../core/braid/braidTracker.js';
import { braidStep, emptyBraidState } from '../../core/braid/braidTracker.js';
import { sceneFrame, type Spot } from '../footpoints/scene.js';
import type { StrandFrame } from '../../core/braid/strandCrossings.js';
import { exchangeFrames, GOLDEN, GOLDEN_ENTROPY, rotationFrames, TWIST } from './braidProtocols.js';
import { footpointReport } from '../../core/footpoints/footpointReport.js';
import { SERIES_COLUMNS, seriesCsv } from '../../core/seriesColumns.js';
import type { FrameOutcome } from '../../replay/analyseChunk.js';
import { archiveJson, archiveSeries } from '../../replay/archiveSeries.js';
import { EMPTY_CONFIG } from '../../replay/batchConfig.js';

const grid = { nx: 64, ny: 64, dx: 0.36, dy: 0.36 };
const CENTRE = 11.5; // Mm
const SPACING = 4; // Mm: 5 spot widths, so that neighbours stay apart
const NOISE_G = 8;

/** Each protocol frame as a B-only frame: a Gaussian spot (0.8 Mm, 1500 G) at each point. */
function runThroughPipeline(points: StrandFrame[], offsetX: number): { reports: BraidReport[]; samples: number; outcomes: FrameOutcome[] } {
  let state: AnalysisState = {};
  let braid: BraidState = emptyBraidState();
  const cache: FluxKernelCache = new Map();
  const reports: BraidReport[] = [];
  let samples = 0;
  const outcomes: FrameOutcome[] = [];
  points.forEach((p, f) => {
    const spots: Spot[] = Array.from({ length: p.x.length }, (_, k) => ({
      x: CENTRE + offsetX + p.x[k], y: CENTRE + p.y[k], a: 0.8, b: 0.8, angle: 0, peak: 1500,
    }));
    const frame = sceneFrame(grid, p.time, spots, NOISE_G, 1000 + f);
    const a = analyseFrame(frame, state, {}, cache);
    state = a.state;
    outcomes.push({ index: f, file: `f${f}.json`, time: p.time, ...(a.sample && { sample: a.sample }), ...(a.footpoints && { extra: { footpoints: footpointReport(a.footpoints, true) } }) });
    if (!a.footpoints) return;
    samples++;
    const step = braidStep(braid, braidInputFromFootpoints(a.footpoints), { strands: 3, windowS: 1e6 });
    braid = step.state;
    reports.push(step.report);
  });
  return { reports, samples, outcomes };
}

let goldenRun: ReturnType<typeof runThroughPipeline> | undefined;
const golden = () => (goldenRun ??= runThroughPipeline(exchangeFrames(3, GOLDEN, 3, { spacing: SPACING, rest: 2 }), -SPACING));

describe('braid entropy through the pipeline (Gaussian spots, 8 G noise)', () => {
  it('sigma_1 sigma_2^-1, three periods: entropy 2.887 within 5 %, pair windings near 0, flagged', () => {
    const { reports } = golden();
    const last = reports[reports.length - 1];
    if (process.env.BRAID_FIGURES) console.log(JSON.stringify({ entropy: last.run.entropy, generators: last.segment!.generators, windings: last.segment!.triples[0].windingTurns, axisDeg: last.segment!.axisDeg, frames: last.segment!.frames }));
    expect(last.run.segments).toBe(1);
    expect(Math.abs(last.run.entropy / (3 * GOLDEN_ENTROPY) - 1)).toBeLessThan(0.05);
    const [t] = last.segment!.triples;
    for (const w of t.windingTurns) expect(Math.abs(w)).toBeLessThan(0.02);
    expect(t.flagged).toBe(true);
    expect(Math.abs(t.milnor!)).toBe(1);
  });
  it('process: the braid columns of the series and the braid of the JSON', () => {
    const points = exchangeFrames(3, GOLDEN, 3, { spacing: SPACING, rest: 2 });
    const { outcomes } = golden();
    const entries = points.map((p, f) => ({ file: `f${f}.json`, time: p.time })) as never;
    const a = archiveSeries({ entries, skipped: [] }, outcomes, EMPTY_CONFIG);
    const rows = a.series.rows;
    expect(rows.length).toBe(points.length - 1);
    const last = rows[rows.length - 1];
    // the batch's defaults: 5 strands asked, 3 footpoints there; a 6 h window within the 8.5 h run
    expect(last.braid_strands).toBe(3);
    expect(last.braid_entropy_rate_run! * a.braid!.last!.run.hours).toBeCloseTo(3 * GOLDEN_ENTROPY, 9);
    expect(last.braid_entropy_rate).toBeGreaterThan(0);
    expect(rows[0].braid_entropy_rate).toBeNull();
    const csv = seriesCsv(rows).split('\n');
    // the four braid columns, in this order, wherever later columns go
    const header = csv[0].split(',');
    const at = header.indexOf('braid_entropy_rate');
    expect(header.slice(at, at + 4)).toEqual(['braid_entropy_rate', 'braid_entropy_rate_run', 'braid_strands', 'braid_flagged_triples']);
    const lastCells = csv[csv.length - 2].split(',');
    expect(Number(lastCells[at + 2])).toBe(3);
    expect(SERIES_COLUMNS).toContain('braid_entropy_rate');
    const doc = JSON.parse(JSON.stringify(archiveJson('protocol', [], a))) as { braid: { run: { entropy: number }; segment: { triples: { flagged: boolean; milnor: number }[] }; segments: unknown[] } };
    expect(doc.braid.run.entropy).toBeCloseTo(3 * GOLDEN_ENTROPY, 9);
    expect(doc.braid.segment.triples[0].flagged).toBe(true);
    expect(doc.braid.segments).toHaveLength(1);
  });
  it('sigma_1^2, two periods: entropy 0, the pair winds -2 turns', () => {
    const points = exchangeFrames(3, TWIST, 2, { spacing: SPACING, rest: 2 });
    const { reports } = runThroughPipeline(points, -SPACING);
    const last = reports[reports.length - 1];
    if (process.env.BRAID_FIGURES) console.log(JSON.stringify({ entropy: last.run.entropy, generators: last.segment!.generators, windings: last.segment!.triples[0].windingTurns, axisDeg: last.segment!.axisDeg, frames: last.segment!.frames }));
    expect(last.run.segments).toBe(1);
    expect(last.run.entropy).toBe(0);
    const [t] = last.segment!.triples;
    expect(Math.min(...t.windingTurns)).toBeCloseTo(-2, 1);
  });
  it('a rigid rotation of three spots: entropy 0', () => {
    const points = rotationFrames(3, 1, 24, { radius: SPACING });
    const { reports } = runThroughPipeline(points, 0);
    const last = reports[reports.length - 1];
    if (process.env.BRAID_FIGURES) console.log(JSON.stringify({ entropy: last.run.entropy, generators: last.segment!.generators, windings: last.segment!.triples[0].windingTurns, axisDeg: last.segment!.axisDeg, frames: last.segment!.frames }));
    expect(last.run.segments).toBe(1);
    expect(last.segment!.generators).toBeGreaterThanOrEqual(4);
    expect(last.run.entropy).toBe(0);
  });
});
