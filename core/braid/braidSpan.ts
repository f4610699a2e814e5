// The braid of a fixed set of strands over a span of frames, built frame by frame: the word (its
// crossings on one axis), the Burau products its entropy needs, each 3-strand sub-braid
// (core/braid/tripleBraid.ts), each pair's net winding (the unwrapped angle of the separation, as
// core/footpoints/pairWinding.ts follows it) and the flux-weighted crossing sum. The same fold
// serves a sliding window (rebuilt from its frames) and a whole segment (carried on), so both are
// computed one way. Pure: extendSpan returns a new span.

import type { ScaledComplexMatrix } from './burauMatrix.js';
import { identityInteger, identityScaled, multiplyGeneratorComplex, multiplyGeneratorInteger } from './burauMatrix.js';
import type { BraidEntropy } from './braidEntropy.js';
import { UNIT_CIRCLE_SAMPLES, unitCircleBound, unitCircleSample } from './braidEntropy.js';
import type { Crossing, StrandFrame } from './strandCrossings.js';
import { crossingsBetween, projectionOrder } from './strandCrossings.js';
import type { TripleState, TripleSummary } from './tripleBraid.js';
import { addTripleGenerator, emptyTriple, tripleSummary } from './tripleBraid.js';
import { sl2LogSpectralRadius } from './spectralRadius.js';
import { angleStep, separationAngle } from '../footpoints/pairWinding.js';

export interface BraidSpan {
  /** Footpoint id of each strand. */
  readonly ids: readonly number[];
  /** Projection axis, rad. */
  readonly axis: number;
  readonly start: number;
  readonly end: number;
  readonly frames: number;
  readonly last: StrandFrame;
  /** Strand indices in their order along the axis at the last frame. */
  readonly order: readonly number[];
  /** The word, kept when asked (windows); segments keep only its length. */
  readonly word: readonly Crossing[] | null;
  readonly generators: number;
  readonly exponentSum: number;
  readonly collisions: number;
  /** Sum of sign * flux product over the crossings, Mx^2 (each crossing a half turn of the pair: its helicity, -(1/pi) Phi_a Phi_b dtheta with dtheta = -sign pi). */
  readonly crossingHelicity: number;
  /** Burau at t = -1 (3 strands), exact. */
  readonly integer: readonly bigint[] | null;
  /** Burau on the unit circle (more than 3 strands). */
  readonly unit: readonly ScaledComplexMatrix[] | null;
  /** Triples of strand indices (i < j < k) and their braids. */
  readonly triples: readonly { readonly strands: readonly [number, number, number]; readonly state: TripleState }[];
  /** Net winding of each pair (i < j, row-major n x n, upper part), rad, of strand j about strand i. */
  readonly windings: Float64Array;
}

function tripleList(n: number): [number, number, number][] {
  const out: [number, number, number][] = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) for (let k = j + 1; k < n; k++) out.push([i, j, k]);
  return out;
}

export function startSpan(frame: StrandFrame, ids: readonly number[], axis: number, keepWord: boolean): BraidSpan {
  const n = ids.length;
  const order = projectionOrder(frame, ids.map((_, k) => k), axis);
  return {
    ids, axis, start: frame.time, end: frame.time, frames: 1, last: frame, order,
    word: keepWord ? [] : null, generators: 0, exponentSum: 0, collisions: 0, crossingHelicity: 0,
    integer: n === 3 ? identityInteger(3) : null,
    unit: n > 3 ? Array.from({ length: UNIT_CIRCLE_SAMPLES }, () => identityScaled(n - 1)) : null,
    triples: tripleList(n).map((strands) => {
      // positions of the triple's strands along the axis at the start
      const sorted = [...strands].sort((a, b) => order.indexOf(a) - order.indexOf(b)) as [number, number, number];
      return { strands: sorted, state: emptyTriple() };
    }),
    windings: new Float64Array(n * n),
  };
}

/** The span with one more frame (same strands, in the same order of indices). */
export function extendSpan(span: BraidSpan, frame: StrandFrame): BraidSpan {
  if (!(frame.time > span.end)) throw new RangeError(`braid: frame at ${frame.time} is not after ${span.end}`);
  const n = span.ids.length;
  const step = crossingsBetween(span.last, frame, span.order, span.axis);
  const integer = span.integer && [...span.integer];
  const unit = span.unit && span.unit.map((m) => ({ size: m.size, re: Float64Array.from(m.re), im: Float64Array.from(m.im), logScale: m.logScale }));
  const triples = span.triples.map((t) => ({ strands: t.strands, state: t.state }));
  let order = [...span.order];
  let exponentSum = span.exponentSum, collisions = span.collisions, crossingHelicity = span.crossingHelicity;
  for (const c of step.crossings) {
    if (integer) multiplyGeneratorInteger(integer, 3, c.position, c.sign);
    if (unit) unit.forEach((m, k) => { const t = unitCircleSample(k); multiplyGeneratorComplex(m, n, c.position, c.sign, t.re, t.im); });
    exponentSum += c.sign;
    if (c.collision) collisions++;
    crossingHelicity += c.sign * c.weight;
    for (const t of triples) {
      if (!t.strands.includes(c.left) || !t.strands.includes(c.right)) continue;
      const third = t.strands.find((s) => s !== c.left && s !== c.right)!;
      const position = order.indexOf(third) < order.indexOf(c.left) ? 2 : 1;
      t.state = addTripleGenerator(t.state, position, c.sign);
    }
    order[c.position - 1] = c.right; order[c.position] = c.left;
  }
  order = step.order;
  const windings = Float64Array.from(span.windings);
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const before = separationAngle(span.last.x[i], span.last.y[i], span.last.x[j], span.last.y[j]);
      const after = separationAngle(frame.x[i], frame.y[i], frame.x[j], frame.y[j]);
      windings[i * n + j] += angleStep(before, after);
    }
  }
  return {
    ...span, end: frame.time, frames: span.frames + 1, last: frame, order,
    word: span.word && [...span.word, ...step.crossings], generators: span.generators + step.crossings.length,
    exponentSum, collisions, crossingHelicity, integer, unit, triples, windings,
  };
}

/** The span of `frames` (at least one) on `axis`. */
export function spanOfFrames(frames: readonly StrandFrame[], ids: readonly number[], axis: number, keepWord = true): BraidSpan {
  let span = startSpan(frames[0], ids, axis, keepWord);
  for (let f = 1; f < frames.length; f++) span = extendSpan(span, frames[f]);
  return span;
}

/** The entropy of the span's braid (core/braid/braidEntropy.ts says how). */
export function spanEntropy(span: BraidSpan): BraidEntropy {
  const n = span.ids.length;
  if (n <= 2) return { entropy: 0, method: 'none', exact: true };
  if (span.integer) return { entropy: sl2LogSpectralRadius(span.integer), method: 'burau-sl2z', exact: true };
  let sub = 0;
  for (const t of span.triples) sub = Math.max(sub, tripleSummary(t.state).entropy);
  return { entropy: Math.max(unitCircleBound(span.unit!), sub), method: 'burau-unit-circle-bound', exact: false };
}

export interface TripleReport extends TripleSummary {
  /** Footpoint ids, in their order along the axis at the start of the span. */
  readonly ids: readonly [number, number, number];
  /** Net winding of the pairs (ids 0-1, 0-2, 1-2 of `ids`), turns, counter-clockwise positive. */
  readonly windingTurns: readonly [number, number, number];
  /** Braided (not trivial) while no pair crossed on balance: the pair budget does not see it. */
  readonly flagged: boolean;
}

/** Each triple of the span, most braided (largest entropy, then flagged, then |mu|) first. */
export function spanTriples(span: BraidSpan): TripleReport[] {
  const n = span.ids.length;
  // the angle of b - a and of a - b differ by half a turn: the same winding either way
  const turns = (a: number, b: number) => span.windings[Math.min(a, b) * n + Math.max(a, b)] / (2 * Math.PI);
  const out = span.triples.map(({ strands: [p, q, r], state }) => {
    const s = tripleSummary(state);
    return {
      ...s,
      ids: [span.ids[p], span.ids[q], span.ids[r]] as [number, number, number],
      windingTurns: [turns(p, q), turns(p, r), turns(q, r)] as [number, number, number],
      flagged: !s.trivial && s.pairCrossings.every((c) => c === 0),
    };
  });
  return out.sort((a, b) => b.entropy - a.entropy || Number(b.flagged) - Number(a.flagged) || Math.abs(b.milnor ?? 0) - Math.abs(a.milnor ?? 0));
}
