// One frame of footpoint analysis: segment, track against the previous frame's state, measure
// motion and rotation, and split the helicity flux into spin and orbit. Two estimates side by side:
// the exact split of the G_theta double integral by label (core/labelSplit.ts) when the frame has
// a velocity field, and the point-footpoint estimate (core/pointFootpoints.ts) always. The state
// is a plain object passed in and returned: nothing is kept anywhere else.

import type { FluxKernelCache } from '../fluxKernel.js';
import { fluxKernelFor } from '../fluxKernel.js';
import type { FluxTransport, VelocityMaps } from '../fluxTransport.js';
import { fluxTransport } from '../fluxTransport.js';
import type { Frame } from '../frame.js';
import { checkFrame } from '../frame.js';
import type { Grid } from '../grid.js';
import { sameGrid } from '../grid.js';
import { InputError } from '../inputError.js';
import type { LabelSplit } from '../labelSplit.js';
import { splitByLabels } from '../labelSplit.js';
import type { MeasuredMotion } from './pairMotion.js';
import type { Segmentation } from './segmentation.js';
import type { TrackingResult } from './tracking.js';
import type { PointFootpoint } from '../pointFootpoints.js';
import { pointFootpointEstimate } from '../pointFootpoints.js';
import { KM_PER_MM } from '../units.js';
import { footpointMotion } from './footpointMotion.js';
import type { PairWinding } from './pairWinding.js';
import { angleStep, pairKey, separationAngle } from './pairWinding.js';
import type { PatternNote, PatternRotationOptions } from './patternRotation.js';
import { patternRotation } from './patternRotation.js';
import type { RegionProperties } from './regionProperties.js';
import { regionProperties } from './regionProperties.js';
import type { SegmentationSettings } from './segmentation.js';
import { SEGMENTATION_DEFAULTS, segmentFootpoints } from './segmentation.js';
import type { FootpointEvent, TrackedFootpoint, TrackingSettings, TrackStatus } from './tracking.js';
import { regionRadius, trackFootpoints } from './tracking.js';

export interface FootpointSettings extends SegmentationSettings, TrackingSettings {
  /** Fit the rotation of each tracked footpoint from its pattern (default true). */
  readonly patternRotation?: boolean;
  readonly rotation?: PatternRotationOptions;
  /** How many pairs to list by size of their orbit contribution (default 10). */
  readonly topPairs?: number;
  /** Winding is followed for the pairs among this many largest footpoints by |flux| (default 200: 19900 pairs). */
  readonly windingFootpoints?: number;
  /** Compute the exact label split when a velocity field is present (default true). */
  readonly exactSplit?: boolean;
  /** Caller-owned cache of kernel spectra for the exact split. */
  readonly kernelCache?: FluxKernelCache;
}

/** A footpoint as the state keeps it for the next frame. */
export interface StoredFootpoint extends TrackedFootpoint {
  readonly box: RegionProperties['box'];
  /** Time integral of this footpoint's exact spin since it was first seen, Mx^2 (0 without a split). */
  readonly spinBudget?: number;
}

export interface FootpointBudget {
  /** Time integrals of the rates, Mx^2, and the seconds they cover. */
  readonly spinPoint: number;
  readonly orbitPoint: number;
  readonly secondsPoint: number;
  readonly spinExact: number;
  readonly orbitExact: number;
  readonly backgroundExact: number;
  readonly secondsExact: number;
}

export interface FootpointState {
  readonly version: 1;
  readonly grid: Grid;
  /** Time of the last frame, UTC ms. */
  readonly time: number;
  readonly frames: number;
  readonly nextId: number;
  /** Last frame's labels as stable ids. */
  readonly labels: Int32Array;
  /** Last frame's segmented map (bn smoothed), for the pattern fit. */
  readonly field: Float64Array;
  readonly footpoints: readonly StoredFootpoint[];
  /** Footpoints that vanished within the last RECENT_FRAMES frames (partners for a late cancellation), with the frame count they vanished at. */
  readonly recent: readonly (TrackedFootpoint & { readonly vanishedAtFrame: number })[];
  readonly pairs: readonly PairWinding[];
  readonly budget: FootpointBudget;
}

export type RotationNote = PatternNote | 'first-frame' | 'appeared' | 'merged' | 'split' | 'off';

export interface FootpointRow {
  readonly id: number;
  readonly polarity: 1 | -1;
  readonly status: TrackStatus;
  /** Id of the footpoint of the previous frame this one came from (null when new). */
  readonly parent: number | null;
  /** First seen, UTC ms. */
  readonly born: number;
  /** Signed flux, Mx. */
  readonly flux: number;
  /** Flux-weighted centroid, Mm. */
  readonly x: number;
  readonly y: number;
  readonly pixels: number;
  /** Area, Mm^2. */
  readonly area: number;
  /** Largest |bn|, G. */
  readonly peak: number;
  /** Major-axis angle of the flux-weighted second moments, rad, counter-clockwise from +x. */
  readonly orientation: number;
  /** Axis ratio of the flux-weighted second moments (>= 1; null for a region one pixel wide). */
  readonly elongation: number | null;
  readonly touchesEdge: boolean;
  /** Centroid velocity, km/s, and where it came from (null when unknown). */
  readonly vx: number | null;
  readonly vy: number | null;
  readonly motionSource: 'velocity' | 'tracking' | null;
  /** Rotation rate used, rad/s counter-clockwise, and which measurement it is. */
  readonly omega: number | null;
  readonly omegaSource: 'velocity' | 'pattern' | null;
  readonly omegaVelocity: number | null;
  readonly omegaPattern: number | null;
  readonly omegaPatternError: number | null;
  /** Why there is no pattern rotation (null when there is one). */
  readonly patternNote: RotationNote | null;
  readonly anisotropy: number | null;
  /** Spin of this footpoint, Mx^2/s. */
  readonly spinExact: number | null;
  readonly spinPoint: number | null;
  /** Time integral of its exact spin since it was first seen (carried through merges and splits by the parent), Mx^2. */
  readonly spinBudget: number | null;
  /** 1-sigma of the centroid velocity, km/s, when measured from the pattern over the frame pair. */
  readonly vError: number | null;
}

export interface PairRow {
  readonly a: number;
  readonly b: number;
  /** Orbit of the pair, Mx^2/s. */
  readonly orbitExact: number | null;
  readonly orbitPoint: number | null;
  /** Accumulated winding of the pair, turns (counter-clockwise positive). */
  readonly windingTurns: number | null;
  /** Centroid separation, Mm. */
  readonly separation: number;
}

export type FootpointFlag = 'first-frame' | 'no-footpoints' | 'no-velocity' | 'noise-floor' | 'motion-unknown' | 'spin-unknown';

export interface FootpointAnalysis {
  readonly time: number;
  /** Seconds since the previous frame (null on the first frame). */
  readonly dt: number | null;
  /** Labels as stable ids, 0 = background. */
  readonly labels: Int32Array;
  readonly footpoints: FootpointRow[];
  readonly events: FootpointEvent[];
  /** Exact split by label (null without a velocity field), Mx^2/s. */
  readonly exact: { readonly spin: number; readonly orbit: number; readonly background: number; readonly total: number } | null;
  /** Point-footpoint estimate, Mx^2/s, over the footpoints whose motion is known. */
  readonly point: { readonly spin: number; readonly orbit: number; readonly motionUnknown: number[]; readonly spinUnknown: number[] };
  /** Pairs with the largest |orbit| (exact when present, else point). */
  readonly pairs: PairRow[];
  /** Full pair matrices over `ids` (row-major K*K; NaN where unknown; diagonal 0 for orbit, NaN for winding). */
  readonly pairMatrix: { readonly ids: number[]; readonly orbitExact: Float64Array | null; readonly orbitPoint: Float64Array; readonly windingTurns: Float64Array };
  readonly segmentation: { readonly noise: number; readonly noiseSource: 'given' | 'estimated' | 'floor'; readonly thresholdG: number; readonly maskedFraction: number };
  readonly flags: FootpointFlag[];
  readonly state: FootpointState;
}

/** How many frames a vanished footpoint stays a possible cancellation partner. */
export const RECENT_FRAMES = 3;

const EMPTY_BUDGET: FootpointBudget = { spinPoint: 0, orbitPoint: 0, secondsPoint: 0, spinExact: 0, orbitExact: 0, backgroundExact: 0, secondsExact: 0 };

/** A frame segmented and its footpoints followed from the previous frame: the first half of the analysis. */
export interface TrackedFrame {
  readonly grid: Grid;
  /** Seconds since the previous frame (null on the first). */
  readonly dt: number | null;
  readonly seg: Segmentation;
  readonly regions: RegionProperties[];
  readonly track: TrackingResult;
  /** Labels as stable ids. */
  readonly labels: Int32Array;
}

/** What the second half takes from the rate: the flux transport, the exact split, the measured motions. */
export interface FootpointInputs {
  /** Flux transport of the frame (its velocity, given or modelled); gives the motion of footpoints not in `motions`. */
  readonly transport?: FluxTransport;
  /** The exact split of the rate by label, made by the rate sample. */
  readonly split?: LabelSplit;
  /** Rigid motions measured from the pattern over the frame pair, by id. */
  readonly motions?: ReadonlyMap<number, MeasuredMotion>;
}

/**
 * Analyses `frame` after `previous` (undefined for the first frame of a sequence). `velocity`
 * overrides the frame's own vx, vy (e.g. inferred between two frames). Throws InputError on a bad
 * frame, on a change of grid and on a time that does not follow the previous frame.
 */
export function analyseFootpoints(
  previous: FootpointState | undefined, frame: Frame, settings: FootpointSettings = {}, velocity?: VelocityMaps,
): FootpointAnalysis {
  const tracked = trackFrame(previous, frame, settings);
  const withVelocity = velocity !== undefined || (frame.vx !== undefined && frame.vy !== undefined);
  const transport = withVelocity ? fluxTransport(frame, velocity) : undefined;
  const split = transport && settings.exactSplit !== false
    ? splitByLabels(fluxKernelFor(tracked.grid, settings.kernelCache), transport, tracked.labels)
    : undefined;
  return describeFootpoints(previous, frame, tracked, settings, { ...(transport && { transport }), ...(split && { split }) });
}

/** Segments `frame` and follows its footpoints from `previous`. Throws InputError as analyseFootpoints. */
export function trackFrame(previous: FootpointState | undefined, frame: Frame, settings: FootpointSettings = {}, smoothed?: Float64Array): TrackedFrame {
  const source = frame.provenance?.source ?? 'frame';
  checkFrame(frame, source);
  const grid: Grid = { nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy };
  if (previous) {
    if (!sameGrid(previous.grid, grid)) {
      const g = previous.grid;
      throw new InputError(source, 'grid', `changed between frames: was ${g.nx}x${g.ny} pixels of ${g.dx}x${g.dy} Mm, now ${grid.nx}x${grid.ny} of ${grid.dx}x${grid.dy} Mm; footpoints cannot be tracked across a change of grid, start a new sequence`);
    }
    if (!(frame.time > previous.time)) {
      throw new InputError(source, 'time', `${new Date(frame.time).toISOString()} is not after the previous frame (${new Date(previous.time).toISOString()})`);
    }
  }
  const dt = previous ? (frame.time - previous.time) / 1000 : null;
  const seg = segmentFootpoints(frame.bn, grid, settings, smoothed);
  const regions = regionProperties(seg.labels, frame.bn, grid);
  const track = trackFootpoints(previous, frame.time, seg.labels, regions, grid, previous?.nextId ?? 1, settings);
  return { grid, dt, seg, regions, track, labels: track.labels };
}

/**
 * The footpoint table, pair matrices, windings, budgets and the next state of a tracked frame,
 * with the rate's flux transport, split and measured motions where there are some.
 */
export function describeFootpoints(
  previous: FootpointState | undefined, frame: Frame, tracked: TrackedFrame, settings: FootpointSettings, inputs: FootpointInputs,
): FootpointAnalysis {
  const { grid, dt, seg, regions, track, labels } = tracked;
  const flags: FootpointFlag[] = [];
  if (!previous) flags.push('first-frame');
  if (seg.noiseSource === 'floor') flags.push('noise-floor');
  if (seg.count === 0) flags.push('no-footpoints');
  const split = inputs.split ?? null;
  const measured = inputs.motions;
  if (!inputs.transport && !measured) flags.push('no-velocity');
  const motionById = new Map<number, { vx: number; vy: number; omega: number }>();
  if (inputs.transport) for (const m of footpointMotion(inputs.transport, labels, grid)) motionById.set(m.label, m);

  const prevById = new Map<number, StoredFootpoint>();
  for (const f of previous?.footpoints ?? []) prevById.set(f.id, f);
  const smoothing = settings.smoothing ?? SEGMENTATION_DEFAULTS.smoothing;
  const rotationOptions: PatternRotationOptions = { noiseCorrelation: Math.max(1, 4 * Math.PI * smoothing * smoothing), ...settings.rotation };

  const rows: FootpointRow[] = [];
  const points: PointFootpoint[] = [];
  const motionUnknown: number[] = [];
  regions.forEach((r, k) => {
    const a = track.assignments[k];
    const before = a.parent !== null ? prevById.get(a.parent) : undefined;
    const reliable = a.status === 'continued' && before !== undefined && dt !== null;
    // Pattern rotation.
    let omegaPattern: number | null = null, omegaPatternError: number | null = null, anisotropy: number | null = null;
    let patternNote: RotationNote | null;
    const mm = measured?.get(a.id);
    if (mm) {
      omegaPattern = mm.omega;
      omegaPatternError = mm.omegaError;
      patternNote = mm.omegaNote;
      anisotropy = mm.anisotropy;
    } else if (settings.patternRotation === false) patternNote = 'off';
    else if (!previous) patternNote = 'first-frame';
    else if (!reliable) patternNote = a.status === 'continued' ? 'appeared' : a.status;
    else {
      const fit = patternRotation(
        { field: previous.field, labels: previous.labels, label: before!.id, x: before!.x, y: before!.y, box: before!.box },
        { field: seg.field, labels, label: a.id, x: r.fluxWeighted.x, y: r.fluxWeighted.y, box: r.box },
        grid, rotationOptions,
      );
      anisotropy = fit.anisotropy;
      patternNote = fit.note;
      if (fit.angle !== null) {
        omegaPattern = fit.angle / dt!;
        omegaPatternError = fit.angleError! / dt!;
      }
    }
    const m = motionById.get(a.id);
    const omegaVelocity = m && Number.isFinite(m.omega) ? m.omega : null;
    let vx: number | null = null, vy: number | null = null, motionSource: FootpointRow['motionSource'] = null;
    if (mm) { vx = mm.ux; vy = mm.uy; motionSource = 'tracking'; }
    else if (m && Number.isFinite(m.vx)) { vx = m.vx; vy = m.vy; motionSource = 'velocity'; }
    else if (reliable) {
      vx = ((r.fluxWeighted.x - before!.x) / dt!) * KM_PER_MM;
      vy = ((r.fluxWeighted.y - before!.y) / dt!) * KM_PER_MM;
      motionSource = 'tracking';
    }
    // A rotation measured over the frame pair is what the velocity field was built from.
    const omega = mm ? omegaPattern : omegaVelocity ?? omegaPattern;
    const omegaSource = omega === null ? null : mm || omegaVelocity === null ? 'pattern' : 'velocity';
    if (motionSource === 'velocity' || mm) {
      points.push({ id: a.id, flux: r.flux, x: r.fluxWeighted.x, y: r.fluxWeighted.y, vx: vx!, vy: vy!, omega: omega ?? NaN });
    } else if (motionSource === 'tracking') {
      // Over the frame pair: midpoint position, mean flux.
      points.push({
        id: a.id, flux: (r.flux + before!.flux) / 2, x: (r.fluxWeighted.x + before!.x) / 2, y: (r.fluxWeighted.y + before!.y) / 2,
        vx: vx!, vy: vy!, omega: omega ?? NaN,
      });
    } else motionUnknown.push(a.id);
    rows.push({
      id: a.id, polarity: r.polarity, status: a.status, parent: a.parent, born: a.born,
      flux: r.flux, x: r.fluxWeighted.x, y: r.fluxWeighted.y, pixels: r.pixels, area: r.area, peak: r.peak,
      orientation: r.fluxWeighted.orientation,
      elongation: Number.isFinite(r.fluxWeighted.elongation) ? r.fluxWeighted.elongation : null, touchesEdge: r.touchesEdge,
      vx, vy, motionSource, omega, omegaSource, omegaVelocity, omegaPattern, omegaPatternError, patternNote, anisotropy,
      spinExact: null, spinPoint: null, spinBudget: null, vError: mm ? Math.hypot(mm.uxError, mm.uyError) : null,
    });
  });
  rows.sort((p, q) => p.id - q.id);
  const K = rows.length;
  const ids = rows.map((r) => r.id);
  const rowIndex = new Map<number, number>();
  ids.forEach((id, j) => rowIndex.set(id, j));

  // Point estimate, placed into the full matrix.
  const est = pointFootpointEstimate(points);
  const orbitPoint = new Float64Array(K * K).fill(NaN);
  for (let j = 0; j < K; j++) orbitPoint[j * K + j] = 0;
  const spinPoint = new Float64Array(K).fill(NaN);
  est.ids.forEach((id, p) => {
    const j = rowIndex.get(id)!;
    if (!est.spinUnknown.includes(id)) spinPoint[j] = est.spin[p];
    est.ids.forEach((id2, q) => { if (p !== q) orbitPoint[j * K + rowIndex.get(id2)!] = est.orbit[p * est.ids.length + q]; });
  });
  // Exact split, placed likewise.
  let orbitExact: Float64Array | null = null;
  const spinExact = new Float64Array(K).fill(NaN);
  if (split) {
    orbitExact = new Float64Array(K * K);
    const kk = split.ids.length;
    split.ids.forEach((id, p) => {
      const j = rowIndex.get(id);
      if (j === undefined) return;
      spinExact[j] = split!.spin[p];
      split!.ids.forEach((id2, q) => {
        const jj = rowIndex.get(id2);
        if (jj !== undefined && p !== q) orbitExact![j * K + jj] = split!.orbit[p * kk + q];
      });
    });
  }
  for (let j = 0; j < K; j++) {
    const row = rows[j] as { -readonly [P in keyof FootpointRow]: FootpointRow[P] };
    row.spinPoint = Number.isFinite(spinPoint[j]) ? spinPoint[j] : null;
    // A footpoint whose rotation cannot be seen moves without one: its spin is unknown, not zero.
    const unseen = measured?.get(row.id)?.omega === null;
    row.spinExact = split && !unseen && Number.isFinite(spinExact[j]) ? spinExact[j] : null;
    // The spin budget goes on from the parent (the footpoint it continues, or the larger one it came
    // from); the rectangle rule over the interval since the previous frame, as the footpoint budget.
    const carried = row.parent !== null ? prevById.get(row.parent)?.spinBudget ?? 0 : 0;
    row.spinBudget = split ? carried + (dt !== null && row.spinExact !== null ? row.spinExact * dt : 0) : null;
  }
  if (motionUnknown.length > 0 && K > 0) flags.push('motion-unknown');
  if (est.spinUnknown.length > 0 || (motionUnknown.length > 0 && K > 0)) flags.push('spin-unknown');

  // Winding of the pairs among the `windingFootpoints` largest footpoints (by |flux|); steps only
  // between footpoints followed without an event.
  const prevPairs = new Map<number, PairWinding>();
  for (const p of previous?.pairs ?? []) prevPairs.set(pairKey(p.a, p.b), p);
  const windingTurns = new Float64Array(K * K).fill(NaN);
  const pairs: PairWinding[] = [];
  const maxWinding = settings.windingFootpoints ?? 200;
  const inWinding = new Uint8Array(K);
  [...rows.keys()].sort((p, q) => Math.abs(rows[q].flux) - Math.abs(rows[p].flux)).slice(0, maxWinding).forEach((j) => { inWinding[j] = 1; });
  for (let i = 0; i < K; i++) {
    if (!inWinding[i]) continue;
    for (let j = i + 1; j < K; j++) {
      if (!inWinding[j]) continue;
      const A = rows[i], B = rows[j];
      const angle = separationAngle(A.x, A.y, B.x, B.y);
      const old = prevPairs.get(pairKey(A.id, B.id));
      let winding = 0, steps = 0;
      if (old) {
        winding = old.winding;
        steps = old.steps;
        if (A.status === 'continued' && B.status === 'continued') { winding += angleStep(old.angle, angle); steps++; }
      }
      const o = orbitPoint[i * K + j];
      const orbitBudget = (old?.orbitBudget ?? 0) + (dt !== null && Number.isFinite(o) ? o * dt : 0);
      pairs.push({ a: A.id, b: B.id, angle, winding, orbitBudget, steps });
      windingTurns[i * K + j] = windingTurns[j * K + i] = winding / (2 * Math.PI);
    }
  }

  // Top pairs by |orbit|, kept in a short sorted list rather than sorting all K^2/2 pairs.
  const topCount = settings.topPairs ?? 10;
  const top: PairRow[] = [];
  const size = (p: PairRow) => Math.abs(p.orbitExact ?? p.orbitPoint ?? 0);
  for (let i = 0; i < K && topCount > 0; i++) {
    for (let j = i + 1; j < K; j++) {
      const oe = orbitExact ? orbitExact[i * K + j] : null;
      const op = orbitPoint[i * K + j];
      const v = Math.abs(oe ?? (Number.isFinite(op) ? op : 0));
      if (top.length === topCount && v <= size(top[top.length - 1])) continue;
      const wt = windingTurns[i * K + j];
      const row: PairRow = {
        a: ids[i], b: ids[j], orbitExact: oe, orbitPoint: Number.isFinite(op) ? op : null,
        windingTurns: Number.isFinite(wt) ? wt : null, separation: Math.hypot(rows[j].x - rows[i].x, rows[j].y - rows[i].y),
      };
      let at = top.length;
      while (at > 0 && size(top[at - 1]) < v) at--;
      top.splice(at, 0, row);
      if (top.length > topCount) top.pop();
    }
  }

  const exact = split ? { spin: split.spinTotal, orbit: split.orbitTotal, background: split.background, total: split.total } : null;
  const point = { spin: est.spinTotal, orbit: est.orbitTotal, motionUnknown, spinUnknown: [...est.spinUnknown] };
  const b = previous?.budget ?? EMPTY_BUDGET;
  const budget: FootpointBudget = dt === null ? b : {
    spinPoint: b.spinPoint + point.spin * dt, orbitPoint: b.orbitPoint + point.orbit * dt, secondsPoint: b.secondsPoint + dt,
    spinExact: b.spinExact + (exact ? exact.spin * dt : 0), orbitExact: b.orbitExact + (exact ? exact.orbit * dt : 0),
    backgroundExact: b.backgroundExact + (exact ? exact.background * dt : 0), secondsExact: b.secondsExact + (exact ? dt : 0),
  };
  const frames = (previous?.frames ?? 0) + 1;
  const recent = (previous?.recent ?? []).filter((f) => frames - f.vanishedAtFrame < RECENT_FRAMES);
  for (const e of track.events) {
    const gone = e.kind === 'vanished' ? prevById.get(e.id) : undefined;
    if (gone) recent.push({ ...gone, vanishedAtFrame: frames });
  }
  const stored: StoredFootpoint[] = regions.map((r, k) => {
    const a = track.assignments[k];
    const row = rows[rowIndex.get(a.id)!];
    return {
      id: a.id, polarity: r.polarity, flux: r.flux, x: r.fluxWeighted.x, y: r.fluxWeighted.y, pixels: r.pixels,
      radius: regionRadius(r), touchesEdge: r.touchesEdge, vx: row.vx, vy: row.vy, born: a.born, box: r.box,
      ...(row.spinBudget !== null && { spinBudget: row.spinBudget }),
    };
  });
  const state: FootpointState = {
    version: 1, grid, time: frame.time, frames, nextId: track.nextId,
    labels, field: seg.field, footpoints: stored, recent, pairs, budget,
  };
  return {
    time: frame.time, dt, labels, footpoints: rows, events: track.events, exact, point, pairs: top,
    pairMatrix: { ids, orbitExact, orbitPoint, windingTurns },
    segmentation: { noise: seg.noise, noiseSource: seg.noiseSource, thresholdG: seg.thresholdG, maskedFraction: seg.maskedFraction },
    flags, state,
  };
}
