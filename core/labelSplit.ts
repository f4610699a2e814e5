// The exact split of the helicity-flux double integral by a label map (Longcope, Ravindra &
// Barnes 2007 call the parts spin and braiding): pixel pairs inside one footpoint are its spin,
// pairs in two different footpoints are their orbit, pairs touching an unlabelled pixel are
// background. The pair weight
//
//   w(x, x') = -(1/2pi) [(x - x') x (u - u')]_z / |x - x'|^2  Bn Bn' dS dS'
//            = -(1/2pi) [X (Bn' Fy - Bn Fy') - Y (Bn' Fx - Bn Fx')] / r^2 dS dS'   (F = Bn u)
//
// is symmetric, so each unordered pair is visited once. Pairs of two small footpoints are summed
// directly; a large footpoint instead gets one FFT convolution of its own pixels, whose field is
// then summed over every labelled pixel: cost is chosen per footpoint. That row is made either
// over the whole padded grid or one pair at a time over the two footpoints' bounding boxes
// (core/boxPairSum.ts), whichever is estimated cheaper. Background is the
// remainder of the total, so spin + orbit + background = total to rounding.
//
// Direct pair sums grow as the square of the labelled pixels. When the whole pair matrix would
// cost more than `pairBudget` visits, it is filled for the largest footpoints only (the others'
// entries are NaN and `pairsComplete` is false); every spin is still exact, and the orbit total
// stays exact because it is taken as the labelled-labelled double sum (one more convolution, of
// all labelled pixels together) minus the spins.
//
// The work (the direct sums, each large footpoint's convolution, the labelled convolution) can be
// dealt to parts that run in different threads: `splitPart(..., { part, of })` does its share and
// `joinSplitParts` puts the shares together. Each sum is made whole in one part, so the joined
// split is the one-part split bit for bit.
//
//   splitByLabels(kernel, t, labels, { total })
//   joinSplitParts([splitPart(kernel, t, labels, {}, { part: 0, of: 2 }), splitPart(kernel, t, labels, {}, { part: 1, of: 2 })], total)

import type { FluxKernel, FluxKernelCache } from './fluxKernel.js';
import { nextPowerOfTwo } from './fft.js';
import type { FluxTransport } from './fluxTransport.js';
import { convolveField, convolveTransport, helicityFluxTotal } from './helicityFlux.js';
import { CM_PER_KM, CM_PER_MM, pixelAreaCm2 } from './units.js';
import type { BoxMaps, BoxSpectra, PairGrids, PixelBox } from './boxPairSum.js';
import { boxPairSum, boxSpectra, createPairGrids, pairGrid, pairGridSize, spectraSpace } from './boxPairSum.js';

export interface LabelSplit {
  /** Label values present among valid pixels, ascending (0 excluded). */
  readonly ids: readonly number[];
  /** Spin of each footpoint, Mx^2/s. */
  readonly spin: Float64Array;
  /** Orbit of each unordered pair, Mx^2/s: row-major K*K, symmetric, zero diagonal. */
  readonly orbit: Float64Array;
  readonly spinTotal: number;
  readonly orbitTotal: number;
  readonly background: number;
  readonly total: number;
  /** How many footpoints were handled by their own FFT convolution (the rest by direct sums). */
  readonly convolvedFootpoints: number;
  /** False when the pair matrix holds only the pairs among the largest footpoints (NaN elsewhere). */
  readonly pairsComplete: boolean;
  /**
   * Kx * Bn and Ky * Bn of the labelled pixels alone, on the rows that hold a labelled pixel (0
   * elsewhere), when the split had to convolve them (pairs incomplete): the motion uncertainty
   * needs the same field (core/motionUncertainty.ts) and takes it from here.
   */
  readonly labelledField?: { readonly p: Float64Array; readonly q: Float64Array };
}

export interface LabelSplitOptions {
  /** The total from G_theta when already computed (saves one convolution). */
  readonly total?: number;
  /**
   * Direct pair sums a footpoint may cost, per padded-grid pixel, before it gets its own FFT
   * instead (default 4). One padded convolution (six transforms) costs about as much as 12 direct
   * pair visits per padded pixel, but most rows are now made by box pair sums at a fraction of
   * that: timed on the demo pair and archive frames (docs/speed.md, eighth round), 2-4 split
   * fastest. Infinity forces direct sums, 0 forces FFTs.
   */
  readonly directPairsPerPaddedPixel?: number;
  /** Most direct pair visits spent on the pair matrix (default 1e7, about 40 ms here). */
  readonly pairBudget?: number;
  /**
   * Most large footpoints that get a full-grid convolution (their whole row of the pair matrix;
   * default 4); rows by box pair sums (`rows`) do not count. The other large ones get only their
   * spin (their pair with themselves over their own box, far cheaper), and their pairs stay NaN.
   */
  readonly maxFullRows?: number;
  /** Caller-owned cache for the kernels of those bounding boxes and the box rows' pair grids. */
  readonly cache?: SplitCache;
  /**
   * How a large footpoint's row is made: 'grid' by one convolution over the whole padded grid,
   * 'boxes' by one transform pair sum per other footpoint over the two bounding boxes
   * (core/boxPairSum.ts), 'auto' (default) whichever the cost estimate says is cheaper. The same
   * sums to rounding.
   */
  readonly rows?: 'auto' | 'grid' | 'boxes';
}

/** A kernel cache that also keeps the pair grids of the box rows and spins (made at the first that needs one). */
export type SplitCache = FluxKernelCache & { pairGrids?: PairGrids };

export function splitByLabels(
  kernel: FluxKernel, t: FluxTransport, labels: Int32Array, options: LabelSplitOptions = {},
): LabelSplit {
  return joinSplitParts([splitPart(kernel, t, labels, options, WHOLE)], options.total ?? helicityFluxTotal(kernel, t));
}

/** Which share of the split's work a call does: part `part` of `of` (0 <= part < of). */
export interface SplitShare {
  readonly part: number;
  readonly of: number;
  /**
   * Work each part's thread has besides its share, in full-grid convolutions (default none): the
   * deal gives those parts less. Every part of one split must be given the same.
   */
  readonly otherWork?: readonly number[];
}

const WHOLE: SplitShare = { part: 0, of: 1 };

/** One part's share of a split: raw sums before the physical factors, and what it did. */
export interface SplitPart {
  readonly ids: readonly number[];
  /** Per footpoint: summed directly (0), or large (1): a row of its own (`hasRow`) or only its spin from its box. */
  readonly big: Uint8Array;
  readonly hasRow: Uint8Array;
  /** Per footpoint with a row: made by box pair sums (1) or over the whole grid (0). */
  readonly byBoxes: Uint8Array;
  readonly inPairs: Uint8Array;
  readonly pairsComplete: boolean;
  /** Ordered-pair direct sums (filled when this part did them). */
  readonly sums: Float64Array;
  readonly didDirect: boolean;
  /** FFT sums at [target][source]; column `a` filled when this part convolved footpoint a (didSource[a]). */
  readonly fftSums: Float64Array;
  readonly didSource: Uint8Array;
  /** The labelled-labelled double sum and the labelled field, when this part made them. */
  readonly labelledSum?: number;
  readonly labelledField?: { readonly p: Float64Array; readonly q: Float64Array };
  readonly directFactor: number;
  readonly fftFactor: number;
}

/**
 * Part `share.part` of `share.of` of the split: every part finds the same footpoints and plan, and
 * the work items (the direct sums, each large footpoint's convolution, the labelled convolution)
 * are dealt by their estimated cost, largest first, each to the part with the least so far.
 */
export function splitPart(
  kernel: FluxKernel, t: FluxTransport, labels: Int32Array, options: LabelSplitOptions, share: SplitShare,
): SplitPart {
  if (!(Number.isInteger(share.of) && share.of >= 1 && Number.isInteger(share.part) && share.part >= 0 && share.part < share.of)) {
    throw new RangeError(`split part ${share.part} of ${share.of}: need integers 0 <= part < of`);
  }
  const { nx, ny, dx, dy, plan } = kernel;
  const n = nx * ny;
  if (labels.length !== n) throw new RangeError(`labels has ${labels.length} values, expected ${n}`);
  const { bn, fx, fy, valid } = t;

  // Compact label index (slot[i] = index of pixel i's footpoint, -1 for none), pixel counts,
  // bounding boxes and the labelled pixels in ascending order, each footpoint's contiguous (a
  // counting sort): the loops below visit labelled pixels only, in the order of a full pass, so
  // every sum adds the same terms in the same order.
  const { ids, slot } = labelSlots(labels, valid);
  const k = ids.length;
  const counts = new Float64Array(k);
  const x0s = new Int32Array(k).fill(nx), x1s = new Int32Array(k).fill(-1);
  const y0s = new Int32Array(k).fill(ny), y1s = new Int32Array(k).fill(-1);
  const labelledRows = new Uint8Array(ny);
  let labelledCount = 0;
  for (let y = 0, i = 0; y < ny; y++) {
    for (let x = 0; x < nx; x++, i++) {
      const j = slot[i];
      if (j < 0) continue;
      counts[j]++;
      labelledCount++;
      labelledRows[y] = 1;
      if (x < x0s[j]) x0s[j] = x;
      if (x > x1s[j]) x1s[j] = x;
      if (y < y0s[j]) y0s[j] = y;
      y1s[j] = y;
    }
  }
  const labelled = new Int32Array(labelledCount);
  const start = new Int32Array(k + 1);
  for (let j = 0; j < k; j++) start[j + 1] = start[j] + counts[j];
  const byFootpoint = new Int32Array(labelledCount);
  {
    const next = start.slice(0, k);
    for (let i = 0, p = 0; i < n; i++) {
      const j = slot[i];
      if (j < 0) continue;
      labelled[p++] = i;
      byFootpoint[next[j]++] = i;
    }
  }

  // Which footpoints get their own convolution: largest first, while direct sums would cost more.
  const perPixel = options.directPairsPerPaddedPixel ?? 4;
  const budget = perPixel * plan.px * plan.py;
  const order = [...Array(k).keys()].sort((a, b) => counts[b] - counts[a]);
  let smallPixels = counts.reduce((s, c) => s + c, 0);
  const big = new Uint8Array(k);
  for (const j of order) {
    if (counts[j] * smallPixels > budget) {
      big[j] = 1;
      smallPixels -= counts[j];
    }
  }

  // Footpoints whose mutual pairs are summed: all of them when the budget allows, else the
  // largest until it is spent (big ones are always in, their FFT rows cost nothing more).
  const pairBudget = options.pairBudget ?? 1e7;
  const inPairs = new Uint8Array(k);
  {
    let spent = 0, pixelsIn = 0;
    for (const j of order) {
      const cost = big[j] ? 0 : counts[j] * pixelsIn;
      if (!big[j] && spent + cost > pairBudget) continue;
      inPairs[j] = 1;
      spent += cost;
      if (!big[j]) pixelsIn += counts[j];
    }
  }
  let pairsComplete = inPairs.every((v) => v === 1);

  // Every large footpoint is given a row here; below, rows go by box pair sums or over the whole
  // grid, and only the largest maxFullRows of the latter keep theirs.
  const maxFullRows = options.maxFullRows ?? 4;
  const hasRow = Uint8Array.from(big);

  // The work items and who does them. Costs in full-grid convolutions: a direct pair visit costs
  // 1/(perPixel padded pixels) of one, a box spin the share of the padded grid its box pads to.
  let directVisits = 0;
  {
    let pixelsIn = 0;
    for (const j of order) {
      if (big[j]) continue;
      directVisits += (counts[j] * (counts[j] - 1)) / 2;
      if (inPairs[j]) { directVisits += counts[j] * pixelsIn; pixelsIn += counts[j]; }
    }
  }
  // A row by box pair sums costs per pair it owns a kernel window's two transforms, its sampling
  // and the target's spectra (three transforms, often shared), and per grid size the source's
  // spectra (three), on the pair's small grid; a row over the whole grid six transforms of the
  // padded grid (less the zero rows, which the estimate leaves out). Transforms cost N log2 N,
  // times BOX_TRANSFORM_FACTOR on the pair grids for the sampling and the spectral sums.
  // A pair of two footpoints with rows is taken from a whole-grid row when either has one (there it
  // costs nothing more), otherwise from the box row of the first.
  const boxes: PixelBox[] = [];
  for (let j = 0; j < k; j++) boxes.push({ x0: x0s[j], y0: y0s[j], w: x1s[j] - x0s[j] + 1, h: y1s[j] - y0s[j] + 1 });
  const rowMethod = options.rows ?? 'auto';
  const byBoxes = new Uint8Array(k);
  if (rowMethod !== 'grid') for (let a = 0; a < k; a++) byBoxes[a] = hasRow[a];
  const ownsPair = (a: number, b: number) => b !== a && counts[b] > 0 && !(hasRow[b] && (!byBoxes[b] || b < a));
  const gridRowCost = 6 * transformCost(plan.px, plan.py);
  const boxRowEstimate = (a: number) => {
    let cost = 0;
    const sizes = new Set<number>();
    for (let b = 0; b < k; b++) {
      if (!ownsPair(a, b)) continue;
      const { px, py } = pairGridSize(boxes[a], boxes[b]);
      cost += 6 * transformCost(px, py);
      if (!sizes.has(px * 65536 + py)) { sizes.add(px * 65536 + py); cost += 3 * transformCost(px, py); }
    }
    return (BOX_TRANSFORM_FACTOR * cost) / gridRowCost;
  };
  // Rows whose box pairs would cost more go to the whole grid, largest first, until none does
  // (each one moved takes its pairs off the others' box rows).
  for (let changed = rowMethod === 'auto'; changed;) {
    changed = false;
    for (const a of order) {
      if (!byBoxes[a]) continue;
      if (boxRowEstimate(a) >= 1) { byBoxes[a] = 0; changed = true; }
    }
  }
  {
    let rows = 0;
    for (const j of order) if (hasRow[j] && !byBoxes[j] && rows++ >= maxFullRows) hasRow[j] = 0;
  }
  // Large footpoints without a row leave their pairs unknown.
  if (hasRow.some((v, j) => big[j] && !v)) pairsComplete = false;
  const gridRow = Uint8Array.from(hasRow, (v, a) => (v && !byBoxes[a] ? 1 : 0));
  // The box rows' costs for the deal, on the final plan (which pairs each owns).
  const boxRowCost = Float64Array.from(byBoxes, (v, a) => (v && hasRow[a] ? boxRowEstimate(a) : 0));

  const items: { cost: number; kind: 'direct' | 'source' | 'labelled'; a: number }[] = [];
  if (directVisits > 0) items.push({ cost: directVisits / budget, kind: 'direct', a: -1 });
  for (let a = 0; a < k; a++) {
    if (!big[a]) continue;
    const box = 4 * nextPowerOfTwo(x1s[a] - x0s[a] + 1) * nextPowerOfTwo(y1s[a] - y0s[a] + 1);
    const spinCost = box / (plan.px * plan.py);
    items.push({ cost: !hasRow[a] ? spinCost : byBoxes[a] ? spinCost + boxRowCost[a] : 1, kind: 'source', a });
  }
  // The labelled field: one forward and two inverse transforms, half a full-grid row.
  if (!pairsComplete) items.push({ cost: 0.5, kind: 'labelled', a: -1 });
  const mine = dealWork(items.map((i) => i.cost), share.of, share.otherWork).map((p) => p === share.part);
  const didDirect = items.some((i, e) => i.kind === 'direct' && mine[e]);
  const didLabelled = items.some((i, e) => i.kind === 'labelled' && mine[e]);
  const didSource = new Uint8Array(k);
  items.forEach((i, e) => { if (i.kind === 'source' && mine[e]) didSource[i.a] = 1; });

  // Ordered-pair sums S[a][b] = Sum_{x in a, x' in b} (pair bracket), before physical factors.
  const sums = new Float64Array(k * k);

  // Direct sums over pixels of small footpoints, grouped by footpoint.
  const m = didDirect ? smallPixels : 0;
  const xs = new Float64Array(m), ys = new Float64Array(m);
  const bs = new Float64Array(m), fxs = new Float64Array(m), fys = new Float64Array(m);
  const groupStart: number[] = [];
  const groupLabel: number[] = [];
  if (didDirect) {
    let p = 0;
    for (let j = 0; j < k; j++) {
      if (big[j] || counts[j] === 0) continue;
      groupStart.push(p);
      groupLabel.push(j);
      for (let e = start[j]; e < start[j + 1]; e++) {
        const i = byFootpoint[e];
        xs[p] = (i % nx) * dx; ys[p] = Math.floor(i / nx) * dy;
        bs[p] = bn[i]; fxs[p] = fx[i]; fys[p] = fy[i];
        p++;
      }
    }
    groupStart.push(p);
  }
  const groups = groupLabel.length; // 0 when another part does the direct sums
  for (let ga = 0; ga < groups; ga++) {
    const la = groupLabel[ga];
    for (let i = groupStart[ga]; i < groupStart[ga + 1]; i++) {
      const xi = xs[i], yi = ys[i], bi = bs[i], fxi = fxs[i], fyi = fys[i];
      for (let gb = ga; gb < groups; gb++) {
        if (gb !== ga && !(inPairs[la] && inPairs[groupLabel[gb]])) continue;
        const from = gb === ga ? i + 1 : groupStart[gb];
        const to = groupStart[gb + 1];
        const s = pairBracketSum(xs, ys, bs, fxs, fys, xi, yi, bi, fxi, fyi, from, to);
        // Each unordered pair stands for two ordered ones.
        const lb = groupLabel[gb];
        sums[la * k + lb] += 2 * s;
      }
    }
  }
  // Direct sums use Mm for X, Y and G km/s for F: convert to cgs and apply -(1/2pi) dS dS'.
  const area = pixelAreaCm2(dx, dy);
  const directFactor = (-1 / (2 * Math.PI)) * (CM_PER_KM / CM_PER_MM) * area * area;

  // FFT path: the field of each big footpoint, summed over every labelled pixel (whole-grid rows),
  // over each other footpoint by box pair sums (box rows), or over its own pixels only (spins).
  const fftSums = new Float64Array(k * k);
  // The full-grid inputs (zero but for one footpoint's pixels, which are cleared after its
  // convolution) and one set of convolution maps for every full-grid convolution below (each
  // overwrites it), made only when a convolution needs them.
  let inputs: { bn: Float64Array; fx: Float64Array; fy: Float64Array } | undefined;
  let convMaps: { p: Float64Array; q: Float64Array; r: Float64Array } | undefined;
  const fullGrid = () => {
    // Two allocations instead of six (each large allocation may cost a young-generation GC).
    const thirds = (block: Float64Array) => [0, 1, 2].map((e) => block.subarray(e * n, (e + 1) * n));
    if (!inputs) { const [bn, fx, fy] = thirds(new Float64Array(3 * n)); inputs = { bn, fx, fy }; }
    if (!convMaps) { const [p, q, r] = thirds(new Float64Array(3 * n)); convMaps = { p, q, r }; }
    return { inputs, convMaps };
  };
  /** Convolution of footpoint a's pixels alone. */
  const convolveFootpoint = (a: number) => {
    const pixels = byFootpoint, from = start[a], to = start[a + 1];
    const { inputs: m, convMaps: out } = fullGrid();
    for (let e = from; e < to; e++) { const i = pixels[e]; m.bn[i] = bn[i]; m.fx[i] = fx[i]; m.fy[i] = fy[i]; }
    const conv = convolveTransport(kernel, m, labelledRows, out);
    for (let e = from; e < to; e++) { const i = pixels[e]; m.bn[i] = 0; m.fx[i] = 0; m.fy[i] = 0; }
    return conv;
  };
  // The box pairs this part sums: each box row's spin (its pair with itself, over its own box),
  // then one pair at a time (the pairs with rows of their own before a are taken from those).
  const boxPairs: { a: number; b: number; px: number; py: number }[] = [];
  for (let a = 0; a < k; a++) {
    if (!big[a] || !didSource[a] || (hasRow[a] && !byBoxes[a])) continue;
    for (let b = 0; b < k; b++) {
      if (b !== a && !(hasRow[a] && ownsPair(a, b))) continue;
      boxPairs.push({ a, b, ...pairGridSize(boxes[a], boxes[b]) });
    }
  }
  if (boxPairs.length > 0) {
    // Pair grids up to the largest this frame needs, made once (the caller's, when it keeps a
    // cache). The pairs go one grid size at a time, largest first, and each size's spectra are let
    // go before the next size's are made: at 512^2 the spectra of a frame's box rows reach 30 MiB
    // when all are held at once. Each entry is its own sum, so the order leaves the numbers as
    // they are; the whole-grid rows below come after, when these are no longer held.
    const holder: { pairGrids?: PairGrids } = options.cache ?? {};
    const had = holder.pairGrids;
    let maxPx = had?.maxPx ?? 2, maxPy = had?.maxPy ?? 2;
    for (const pair of boxPairs) { maxPx = Math.max(maxPx, pair.px); maxPy = Math.max(maxPy, pair.py); }
    if (!had || maxPx > had.maxPx || maxPy > had.maxPy) holder.pairGrids = createPairGrids(maxPx, maxPy, { kernel });
    boxPairs.sort((p, q) => q.px * q.py - p.px * p.py || q.px - p.px);
    for (let e = 0; e < boxPairs.length;) {
      const { px, py } = boxPairs[e];
      const g = pairGrid(holder.pairGrids!, px, py);
      const spectra = new Map<number, BoxSpectra>();
      // This size's spectra in the grids' memory while it has room (the SIMD pair sums read them there).
      const space = spectraSpace(holder.pairGrids!);
      const spectraOf = (j: number) => {
        let sp = spectra.get(j);
        if (!sp) { sp = boxSpectra(boxMaps(t, byFootpoint, start[j], start[j + 1], boxes[j], nx), boxes[j], g, space); spectra.set(j, sp); }
        return sp;
      };
      for (; e < boxPairs.length && boxPairs[e].px === px && boxPairs[e].py === py; e++) {
        const { a, b } = boxPairs[e];
        fftSums[b * k + a] = boxPairSum(boxes[a], spectraOf(a), boxes[b], spectraOf(b), g, dx, dy);
      }
    }
  }
  for (let a = 0; a < k; a++) {
    if (!big[a] || !didSource[a] || !hasRow[a] || byBoxes[a]) continue;
    const { p, q, r } = convolveFootpoint(a);
    addFieldSums(t, labelled, slot, gridRow, a, k, p, q, r, fftSums);
  }

  // The convolution includes dS' and the Mm -> cm step; apply -(1/2pi), km -> cm and dS.
  const fftFactor = (-1 / (2 * Math.PI)) * CM_PER_KM * area;
  let labelledPart: { sum: number; field: { p: Float64Array; q: Float64Array } } | undefined;
  if (didLabelled) {
    // The labelled-labelled double sum (the orbit total when the pairs are incomplete:
    // joinSplitParts) from the field of all labelled pixels alone. The kernel is odd, so over one
    // set of pixels Sum Bn (Kx * Fy - Ky * Fx) = -Sum (Fy (Kx * Bn) - Fx (Ky * Bn)): the pair
    // bracket's two halves are equal, and the sum is twice the half that needs only Bn's
    // convolution (three transforms instead of six).
    const labelledBn = new Float64Array(n);
    for (let e = 0; e < labelledCount; e++) { const i = labelled[e]; labelledBn[i] = bn[i]; }
    const field = convolveField(kernel, labelledBn, labelledRows);
    let half = 0;
    for (let e = 0; e < labelledCount; e++) { const i = labelled[e]; half += fy[i] * field.p[i] - fx[i] * field.q[i]; }
    labelledPart = { sum: 2 * half, field };
  }
  return {
    ids, big, hasRow, byBoxes, inPairs, pairsComplete, sums, didDirect, fftSums, didSource,
    ...(labelledPart && { labelledSum: labelledPart.sum, labelledField: labelledPart.field }), directFactor, fftFactor,
  };
}

/**
 * Deals work items (their costs) to `of` parts: largest first, each to the least loaded (ties:
 * lowest part, first item), the parts starting from `start` (their other work; default 0).
 */
export function dealWork(costs: readonly number[], of: number, start: readonly number[] = []): number[] {
  const load = Float64Array.from({ length: of }, (_, p) => start[p] ?? 0);
  const part = new Array<number>(costs.length).fill(0);
  const order = [...costs.keys()].sort((a, b) => costs[b] - costs[a] || a - b);
  for (const e of order) {
    let p = 0;
    for (let c = 1; c < of; c++) if (load[c] < load[p]) p = c;
    part[e] = p;
    load[p] += costs[e];
  }
  return part;
}

/**
 * The split from all its parts (splitPart with the same inputs, part 0 .. of-1, in any order) and
 * the total: each sum taken from the part that made it, then the physical factors as one part would.
 */
export function joinSplitParts(parts: readonly SplitPart[], total: number): LabelSplit {
  if (parts.length === 0) throw new RangeError('joinSplitParts needs at least one part');
  const { ids, big, hasRow, inPairs, pairsComplete, directFactor, fftFactor } = parts[0];
  const k = ids.length;
  const sums = parts.find((p) => p.didDirect)?.sums ?? new Float64Array(k * k);
  const fftSums = new Float64Array(k * k);
  for (const part of parts) {
    for (let a = 0; a < k; a++) {
      if (!part.didSource[a]) continue;
      if (!hasRow[a]) { fftSums[a * k + a] = part.fftSums[a * k + a]; continue; }
      for (let b = 0; b < k; b++) fftSums[b * k + a] = part.fftSums[b * k + a];
    }
  }
  const spin = new Float64Array(k);
  const orbit = new Float64Array(k * k);
  let spinTotal = 0, orbitTotal = 0;
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      const known = a === b || hasRow[a] || hasRow[b] || (!big[a] && !big[b] && inPairs[a] && inPairs[b]);
      if (!known) { orbit[a * k + b] = NaN; orbit[b * k + a] = NaN; continue; }
      // Direct sums sit in the upper triangle; FFT sums at [target][source] for source a big.
      let v = directFactor * (sums[a * k + b] + (a === b ? 0 : sums[b * k + a]));
      if (a === b) v += fftFactor * fftSums[a * k + a];
      else v += 2 * fftFactor * (fftSums[a * k + b] + fftSums[b * k + a]);
      if (a === b) { spin[a] = v; spinTotal += v; }
      else { orbit[a * k + b] = v; orbit[b * k + a] = v; orbitTotal += v; }
    }
  }
  let labelledField: { readonly p: Float64Array; readonly q: Float64Array } | undefined;
  if (!pairsComplete) {
    // Orbit total = (labelled-labelled double sum) - spins.
    const withLabelled = parts.find((p) => p.labelledSum !== undefined);
    if (!withLabelled) throw new RangeError('joinSplitParts: no part made the labelled sum (parts of different splits?)');
    orbitTotal = fftFactor * withLabelled.labelledSum! - spinTotal;
    labelledField = withLabelled.labelledField;
  }
  return {
    ids, spin, orbit, spinTotal, orbitTotal, background: total - spinTotal - orbitTotal, total,
    convolvedFootpoints: big.reduce((s, v) => s + v, 0), pairsComplete, ...(labelledField && { labelledField }),
  };
}

// The hot loops live in small functions of their own: a function called once per frame with
// many loops is optimised loop by loop and falls back to unoptimised code (a boxed number per
// arithmetic step) whenever a later part lacks type feedback, which measured as most of a frame's
// garbage.

/** Sum over j in [from, to) of the pair bracket of pixel i (xi, yi, bi, fxi, fyi) with pixel j, over r^2. */
function pairBracketSum(
  xs: Float64Array, ys: Float64Array, bs: Float64Array, fxs: Float64Array, fys: Float64Array,
  xi: number, yi: number, bi: number, fxi: number, fyi: number, from: number, to: number,
): number {
  let s = 0;
  for (let j = from; j < to; j++) {
    const X = xi - xs[j], Y = yi - ys[j];
    const bj = bs[j];
    s += (X * (bj * fyi - bi * fys[j]) - Y * (bj * fxi - bi * fxs[j])) / (X * X + Y * Y);
  }
  return s;
}

/**
 * The field (p, q, r) of footpoint a summed over every labelled pixel into fftSums[b][a] (b the
 * pixel's footpoint), but for the footpoints before a with a whole-grid row of their own.
 */
function addFieldSums(
  t: FluxTransport, labelled: Int32Array, slot: Int32Array, gridRow: Uint8Array, a: number, k: number,
  p: Float64Array, q: Float64Array, r: Float64Array, fftSums: Float64Array,
): void {
  const { bn, fx, fy } = t;
  for (let e = 0; e < labelled.length; e++) {
    const i = labelled[e];
    const b = slot[i];
    if (gridRow[b] && b < a) continue; // that pair was taken from b's convolution
    fftSums[b * k + a] += fy[i] * p[i] - fx[i] * q[i] - bn[i] * r[i];
  }
}

/**
 * The label values present among valid pixels (ascending, 0 and negatives excluded) and each
 * pixel's index among them (-1 for none). Labels are looked up in a table as long as the largest
 * label is not far above the pixel count (footpoint ids are), otherwise in a map.
 */
function labelSlots(labels: Int32Array, valid: Uint8Array): { ids: number[]; slot: Int32Array } {
  const n = labels.length;
  let max = 0;
  for (let i = 0; i < n; i++) if (labels[i] > max && valid[i]) max = labels[i];
  const slot = new Int32Array(n).fill(-1);
  if (max <= 4 * n + 1024) {
    const table = new Int32Array(max + 1);
    for (let i = 0; i < n; i++) if (labels[i] > 0 && valid[i]) table[labels[i]] = 1;
    const ids: number[] = [];
    for (let l = 1; l <= max; l++) if (table[l]) { table[l] = ids.length; ids.push(l); }
    for (let i = 0; i < n; i++) if (labels[i] > 0 && valid[i]) slot[i] = table[labels[i]];
    return { ids, slot };
  }
  const idSet = new Set<number>();
  for (let i = 0; i < n; i++) if (labels[i] > 0 && valid[i]) idSet.add(labels[i]);
  const ids = [...idSet].sort((a, b) => a - b);
  const index = new Map<number, number>();
  ids.forEach((id, j) => index.set(id, j));
  for (let i = 0; i < n; i++) if (labels[i] > 0 && valid[i]) slot[i] = index.get(labels[i])!;
  return { ids, slot };
}

/** Relative cost of one 2-D transform of px by py points (N log2 N). */
function transformCost(px: number, py: number): number {
  return px * py * Math.log2(px * py);
}

/**
 * Cost per transform point of the box rows against the whole grid's: both run the SIMD kernels,
 * the box rows also sample a kernel window and sum over spectra per pair. Chosen by timing the
 * split with 1, 2 and 3 on the demo pair (docs/speed.md, eighth round).
 */
const BOX_TRANSFORM_FACTOR = 2;

/** A footpoint's Bn, Fx and Fy (pixels byFootpoint[from..to)) on a box w by h from (x0, y0), zero elsewhere. */
function boxMaps(t: FluxTransport, byFootpoint: Int32Array, from: number, to: number, box: PixelBox, nx: number): BoxMaps {
  const size = box.w * box.h;
  const bn = new Float64Array(size), fx = new Float64Array(size), fy = new Float64Array(size);
  for (let e = from; e < to; e++) {
    const i = byFootpoint[e], x = i % nx, y = (i - x) / nx;
    const j = (y - box.y0) * box.w + (x - box.x0);
    bn[j] = t.bn[i]; fx[j] = t.fx[i]; fy[j] = t.fy[i];
  }
  return { bn, fx, fy };
}
