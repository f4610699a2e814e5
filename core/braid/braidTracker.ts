// The braid of the largest footpoints followed frame by frame: the fold the monitor and the batch
// both run over the tracked footpoints of each frame (braidStep), with its state a plain object.
//
// Strands: the `strands` largest footpoints by |flux| when a segment starts. A segment goes on while
// all its footpoints are there and none merged or split (its centroid would jump), and while no
// other footpoint has grown past `entryRatio` times the smallest member's |flux|; otherwise it is
// closed and a new one starts at this frame with the largest footpoints then (the interval across
// the change belongs to neither: a braid needs the same strands at both ends).
// Segments join by adding: the run's entropy is the sum of its segments' entropies and its rate
// that sum over the sum of their durations. The tangling carried across a change of strands is
// not counted, so over a run with changes the figure is an estimate from below.
// The segment keeps its projection axis, chosen at its first frame; the sliding window (the
// segment's frames within `windowS`) is projected afresh on the axis its own frames favour.

import { InputError } from '../inputError.js';
import type { BraidEntropy } from './braidEntropy.js';
import type { BraidSpan, TripleReport } from './braidSpan.js';
import { extendSpan, spanEntropy, spanOfFrames, spanTriples, startSpan } from './braidSpan.js';
import { chooseProjectionAxis } from './projectionAxis.js';
import type { StrandFrame } from './strandCrossings.js';

export interface BraidSettings {
  /** Strands: this many largest footpoints (default 5: exact entropy for 3, a lower bound above). */
  readonly strands?: number;
  /** Sliding window, s (default 21600, six hours). */
  readonly windowS?: number;
  /** A footpoint outside the braid starts a new segment once its |flux| passes this times the smallest member's (default 1.5). */
  readonly entryRatio?: number;
}

export const BRAID_DEFAULTS = { strands: 5, windowS: 21600, entryRatio: 1.5 } as const;

/** One footpoint as the braid needs it. */
export interface BraidFootpoint {
  readonly id: number;
  /** Flux-weighted centroid, Mm. */
  readonly x: number;
  readonly y: number;
  /** Signed flux, Mx. */
  readonly flux: number;
}

export interface BraidFrameInput {
  /** UTC ms. */
  readonly time: number;
  readonly footpoints: readonly BraidFootpoint[];
  /** Ids whose track broke this frame (merged or split): a segment holding one ends. */
  readonly broken?: readonly number[];
}

export interface BraidState {
  readonly segment: BraidSpan | null;
  /** The segment's frames within the window (the newest last). */
  readonly recent: readonly StrandFrame[];
  /** Closed segments (of two frames or more): count, entropies summed, seconds summed, all exact. */
  readonly closed: { readonly count: number; readonly entropy: number; readonly seconds: number; readonly exact: boolean };
}

export function emptyBraidState(): BraidState {
  return { segment: null, recent: [], closed: { count: 0, entropy: 0, seconds: 0, exact: true } };
}

export interface BraidGenerator {
  /** 1-based position along the axis; sign +1 a clockwise (right-handed) exchange. */
  readonly position: number;
  readonly sign: 1 | -1;
  /** UTC ms. */
  readonly time: number;
  /** Footpoint ids of the pair: `left` was at `position` before the swap. */
  readonly left: number;
  readonly right: number;
  /** Flux product at the crossing, Mx^2. */
  readonly weight: number;
}

export interface BraidSpanReport extends BraidEntropy {
  readonly start: number;
  readonly end: number;
  readonly hours: number;
  readonly frames: number;
  /** The projection axis, degrees counter-clockwise from +x. */
  readonly axisDeg: number;
  readonly generators: number;
  /** Entropy per hour (null over no time). */
  readonly ratePerHour: number | null;
  /** Sum of sign * flux product over the crossings, Mx^2. */
  readonly crossingHelicity: number;
  /** Crossings where the two footpoints met (their sign is a guess). */
  readonly collisions: number;
  readonly triples: readonly TripleReport[];
}

export interface BraidReport {
  readonly time: number;
  /** Footpoint ids of the strands (the current segment's), or none. */
  readonly strands: readonly number[];
  /** Why a new segment started at this frame, when one did. */
  readonly segmentStarted: string | null;
  readonly segment: BraidSpanReport | null;
  /** The sliding window (null until it holds two frames). */
  readonly window: (BraidSpanReport & { readonly word: readonly BraidGenerator[] }) | null;
  /** The whole run so far: segments joined by adding their entropies. */
  readonly run: { readonly segments: number; readonly entropy: number; readonly hours: number; readonly ratePerHour: number | null; readonly exact: boolean };
}

function resolve(settings: BraidSettings) {
  const s = { ...BRAID_DEFAULTS, ...Object.fromEntries(Object.entries(settings).filter(([, v]) => v !== undefined)) } as Required<BraidSettings>;
  if (!Number.isInteger(s.strands) || s.strands < 2) throw new InputError('braid settings', 'strands', `must be an integer of at least 2, got ${s.strands}`);
  if (!(s.windowS > 0)) throw new InputError('braid settings', 'windowS', `must be positive, got ${s.windowS}`);
  if (!(s.entryRatio >= 1)) throw new InputError('braid settings', 'entryRatio', `must be at least 1, got ${s.entryRatio}`);
  return s;
}

function strandFrame(time: number, chosen: readonly BraidFootpoint[]): StrandFrame {
  return { time, x: chosen.map((f) => f.x), y: chosen.map((f) => f.y), flux: chosen.map((f) => f.flux) };
}

function report(span: BraidSpan, word: boolean): BraidSpanReport & { word?: BraidGenerator[] } {
  const e = spanEntropy(span);
  const hours = (span.end - span.start) / 3.6e6;
  return {
    ...e, start: span.start, end: span.end, hours, frames: span.frames, axisDeg: (span.axis * 180) / Math.PI,
    generators: span.generators, ratePerHour: hours > 0 ? e.entropy / hours : null,
    crossingHelicity: span.crossingHelicity, collisions: span.collisions, triples: spanTriples(span),
    ...(word && span.word && {
      word: span.word.map((c) => ({ position: c.position, sign: c.sign, time: c.time, left: span.ids[c.left], right: span.ids[c.right], weight: c.weight })),
    }),
  };
}

/** Why the segment cannot go on with this frame (null when it can). */
function segmentBreak(span: BraidSpan, input: BraidFrameInput, byId: Map<number, BraidFootpoint>, entryRatio: number): string | null {
  const broken = new Set(input.broken ?? []);
  for (const id of span.ids) {
    if (!byId.has(id)) return `footpoint ${id} is gone`;
    if (broken.has(id)) return `footpoint ${id} merged or split`;
  }
  const smallest = Math.min(...span.ids.map((id) => Math.abs(byId.get(id)!.flux)));
  for (const f of input.footpoints) {
    if (!span.ids.includes(f.id) && Math.abs(f.flux) > entryRatio * smallest) return `footpoint ${f.id} outgrew footpoint ${span.ids.find((id) => Math.abs(byId.get(id)!.flux) === smallest)}`;
  }
  return null;
}

/** The braid after one more frame, and what to report. Pure. */
export function braidStep(state: BraidState, input: BraidFrameInput, settings: BraidSettings = {}): { state: BraidState; report: BraidReport } {
  const s = resolve(settings);
  if (!Number.isFinite(input.time)) throw new InputError('braid', 'time', `not a time: ${input.time}`);
  if (state.segment && !(input.time > state.segment.end)) {
    throw new InputError('braid', 'time', `${new Date(input.time).toISOString()} is not after the last frame (${new Date(state.segment.end).toISOString()})`);
  }
  const usable = input.footpoints.filter((f) => Number.isFinite(f.x) && Number.isFinite(f.y) && Number.isFinite(f.flux) && f.flux !== 0);
  const byId = new Map(usable.map((f) => [f.id, f]));
  let { segment, recent, closed } = state;
  let started: string | null = null;
  const why = segment ? segmentBreak(segment, input, byId, s.entryRatio) : 'first frame';
  if (segment && why === null) {
    const frame = strandFrame(input.time, segment.ids.map((id) => byId.get(id)!));
    segment = extendSpan(segment, frame);
    recent = [...recent, frame].filter((f) => input.time - f.time <= 1000 * s.windowS);
  } else {
    if (segment && segment.frames > 1) {
      const e = spanEntropy(segment);
      closed = { count: closed.count + 1, entropy: closed.entropy + e.entropy, seconds: closed.seconds + (segment.end - segment.start) / 1000, exact: closed.exact && e.exact };
    }
    const chosen = [...usable].sort((a, b) => Math.abs(b.flux) - Math.abs(a.flux) || a.id - b.id).slice(0, s.strands);
    if (chosen.length >= 2) {
      const frame = strandFrame(input.time, chosen);
      segment = startSpan(frame, chosen.map((f) => f.id), chooseProjectionAxis([frame]).angle, false);
      recent = [frame];
      started = why;
    } else {
      segment = null;
      recent = [];
      started = null;
    }
  }
  const seg = segment && report(segment, false);
  let window: BraidReport['window'] = null;
  if (segment && recent.length >= 2) {
    const span = spanOfFrames(recent, segment.ids, chooseProjectionAxis(recent).angle, true);
    const w = report(span, true);
    window = { ...w, word: w.word ?? [] };
  }
  const entropy = closed.entropy + (seg?.entropy ?? 0);
  const hours = closed.seconds / 3600 + (seg?.hours ?? 0);
  return {
    state: { segment, recent, closed },
    report: {
      time: input.time, strands: segment?.ids ?? [], segmentStarted: started, segment: seg, window,
      run: { segments: closed.count + (segment ? 1 : 0), entropy, hours, ratePerHour: hours > 0 ? entropy / hours : null, exact: closed.exact && (seg?.exact ?? true) },
    },
  };
}
