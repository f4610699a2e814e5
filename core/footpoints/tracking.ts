// Tracking footpoints from one frame to the next with stable ids. Each footpoint of the previous
// frame is shifted by its predicted motion and laid over the new labels; regions of the same
// polarity that overlap enough are linked. Footpoints left unlinked are then paired by distance
// and flux. The links decide everything:
//   one parent, one child        -> the child keeps the id (continued)
//   several parents, one child   -> merged: the child keeps the id of the parent it overlaps most
//   one parent, several children -> split: the child overlapping most keeps the id, the rest get new ones
//   no parent                    -> appeared (emergence when a new opposite-polarity neighbour appears beside it)
//   no child                     -> vanished (cancellation when an opposite-polarity neighbour was beside it)

import type { Grid } from '../grid.js';
import type { RegionProperties } from './regionProperties.js';

export interface TrackingSettings {
  /** Least overlap, as a share of the smaller footpoint's pixels, for a link (default 0.1). */
  readonly minOverlap?: number;
  /** Footpoints without overlap are paired within their radii plus this many pixels of the predicted position (default 4). */
  readonly searchPixels?: number;
  /** Opposite-polarity footpoints whose edges (centroid distance less both radii) are closer than this many pixels are partners for emergence and cancellation (default 3). */
  readonly contactPixels?: number;
}

export const TRACKING_DEFAULTS = { minOverlap: 0.1, searchPixels: 4, contactPixels: 3 } as const;

/** What tracking keeps of a footpoint between frames. */
export interface TrackedFootpoint {
  readonly id: number;
  readonly polarity: 1 | -1;
  /** Signed flux, Mx. */
  readonly flux: number;
  /** Flux-weighted centroid, Mm. */
  readonly x: number;
  readonly y: number;
  readonly pixels: number;
  /** Radius of the circle of the same area, Mm. */
  readonly radius: number;
  readonly touchesEdge: boolean;
  /** Last known centroid velocity, km/s (null when unknown). */
  readonly vx: number | null;
  readonly vy: number | null;
  /** Time first seen, UTC ms. */
  readonly born: number;
}

export type AppearedCause = 'emergence' | 'edge' | 'unpaired';
export type VanishedCause = 'cancellation' | 'edge' | 'unpaired';

export type FootpointEvent =
  | { readonly kind: 'appeared'; readonly time: number; readonly id: number; readonly flux: number; readonly cause: AppearedCause; readonly partner: number | null }
  | { readonly kind: 'vanished'; readonly time: number; readonly id: number; readonly flux: number; readonly cause: VanishedCause; readonly partner: number | null }
  /** `id` is the footpoint that goes on; `from` are all parents (with it), `fluxes` their last fluxes, `flux` the merged flux. */
  | { readonly kind: 'merged'; readonly time: number; readonly id: number; readonly from: readonly number[]; readonly fluxes: readonly number[]; readonly flux: number }
  /** `id` is the parent; `into` are all children (the first keeps the id), `fluxes` theirs, `flux` the parent's last flux. */
  | { readonly kind: 'split'; readonly time: number; readonly id: number; readonly into: readonly number[]; readonly fluxes: readonly number[]; readonly flux: number };

export type TrackStatus = 'continued' | 'appeared' | 'merged' | 'split';

export interface TrackAssignment {
  /** Label in the new segmentation. */
  readonly label: number;
  readonly id: number;
  readonly status: TrackStatus;
  /** The previous footpoint this one continues (null when new). */
  readonly parent: number | null;
  readonly born: number;
}

export interface TrackingResult {
  /** Per region of the new frame (same order as the regions given). */
  readonly assignments: TrackAssignment[];
  /** New labels: the stable ids. */
  readonly labels: Int32Array;
  readonly events: FootpointEvent[];
  readonly nextId: number;
}

export interface PreviousFrame {
  readonly time: number;
  /** Labels of the previous frame: stable ids, 0 = background. */
  readonly labels: Int32Array;
  readonly footpoints: readonly TrackedFootpoint[];
  /** Footpoints that vanished in the last few frames: still partners for a cancellation that ends a frame later. */
  readonly recent?: readonly TrackedFootpoint[];
}

function edgeGap(a: { x: number; y: number; radius: number }, b: { x: number; y: number; radius: number }): number {
  return Math.hypot(a.x - b.x, a.y - b.y) - a.radius - b.radius;
}

/** Equivalent radius (Mm) of a region. */
export function regionRadius(r: RegionProperties): number {
  return Math.sqrt(r.area / Math.PI);
}

/**
 * Links the regions of a new frame (segmentation labels `labels`, properties `regions`) to the
 * footpoints of `previous`. Pure: returns new labels and ids; ids from `nextId` upward are new.
 */
export function trackFootpoints(
  previous: PreviousFrame | undefined, time: number, labels: Int32Array, regions: readonly RegionProperties[],
  grid: Grid, nextId: number, settings: TrackingSettings = {},
): TrackingResult {
  const s = { ...TRACKING_DEFAULTS, ...Object.fromEntries(Object.entries(settings).filter(([, v]) => v !== undefined)) } as Required<TrackingSettings>;
  const { nx, ny, dx, dy } = grid;
  const n = nx * ny;
  const K = regions.length;
  const prev = previous?.footpoints ?? [];
  const P = prev.length;
  const dt = previous ? (time - previous.time) / 1000 : 0;

  // Overlap counts of shifted previous footpoints with new regions of the same polarity.
  const prevPixels = new Float64Array(P);
  const links: { p: number; c: number; w: number }[] = [];
  if (previous) {
    const shiftX = new Int32Array(P), shiftY = new Int32Array(P);
    prev.forEach((f, k) => {
      // Predicted displacement, pixels: v (km/s) dt (s) / 1000 -> Mm.
      shiftX[k] = f.vx === null ? 0 : Math.round((f.vx * dt) / 1000 / dx);
      shiftY[k] = f.vy === null ? 0 : Math.round((f.vy * dt) / 1000 / dy);
    });
    // Lookup tables instead of Maps in the pixel loop: id -> p + 1, label -> c + 1 (0: none).
    const prevOf = new Int32Array(prev.reduce((m, f) => Math.max(m, f.id), 0) + 1);
    prev.forEach((f, k) => { if (f.id > 0) prevOf[f.id] = k + 1; });
    const regionOf = new Int32Array(regions.reduce((m, r) => Math.max(m, r.label), 0) + 1);
    regions.forEach((r, k) => { if (r.label > 0) regionOf[r.label] = k + 1; });
    const counts = new Float64Array(P * K), keys = new Int32Array(P * K);
    const met = overlapCounts(
      previous.labels, labels, nx, ny, prevOf, regionOf, Int8Array.from(prev, (f) => f.polarity), Int8Array.from(regions, (r) => r.polarity),
      shiftX, shiftY, K, prevPixels, counts, keys,
    );
    // Links that pass the overlap share, in the order their pairs were first met.
    for (let e = 0; e < met; e++) {
      const key = keys[e], count = counts[key];
      const p = Math.floor(key / K), c = key % K;
      if (count >= s.minOverlap * Math.min(prevPixels[p] || prev[p].pixels, regions[c].pixels)) links.push({ p, c, w: count });
    }
  }
  const prevLinked = new Uint8Array(P), curLinked = new Uint8Array(K);
  for (const l of links) { prevLinked[l.p] = 1; curLinked[l.c] = 1; }
  // Unlinked footpoints: nearest predicted position of the same polarity and similar flux.
  const candidates: { p: number; c: number; d: number }[] = [];
  for (let p = 0; p < P; p++) {
    if (prevLinked[p]) continue;
    const f = prev[p];
    const px = f.x + (f.vx === null ? 0 : (f.vx * dt) / 1000), py = f.y + (f.vy === null ? 0 : (f.vy * dt) / 1000);
    for (let c = 0; c < K; c++) {
      const r = regions[c];
      if (curLinked[c] || r.polarity !== f.polarity) continue;
      const d = Math.hypot(r.fluxWeighted.x - px, r.fluxWeighted.y - py);
      const ratio = Math.abs(r.flux / f.flux);
      if (d <= Math.max(f.radius, regionRadius(r)) + s.searchPixels * Math.max(dx, dy) && ratio > 0.25 && ratio < 4) candidates.push({ p, c, d });
    }
  }
  candidates.sort((a, b) => a.d - b.d);
  for (const { p, c, d } of candidates) {
    if (prevLinked[p] || curLinked[c]) continue;
    prevLinked[p] = 1; curLinked[c] = 1;
    links.push({ p, c, w: 1 / (1 + d) });
  }

  // Primary parent of each new region: the link of largest weight.
  const primary = new Int32Array(K).fill(-1);
  const primaryW = new Float64Array(K);
  for (const l of links) if (l.w > primaryW[l.c]) { primary[l.c] = l.p; primaryW[l.c] = l.w; }
  const children: number[][] = Array.from({ length: P }, () => []);
  for (let c = 0; c < K; c++) if (primary[c] >= 0) children[primary[c]].push(c);
  const weightOf = (p: number, c: number) => links.reduce((m, l) => (l.p === p && l.c === c ? Math.max(m, l.w) : m), 0);

  const ids = new Int32Array(K);
  const status: TrackStatus[] = new Array(K).fill('appeared');
  const parentId: (number | null)[] = new Array(K).fill(null);
  const born = new Float64Array(K).fill(time);
  const events: FootpointEvent[] = [];
  let next = nextId;
  for (let p = 0; p < P; p++) {
    const kids = children[p];
    if (kids.length === 0) continue;
    kids.sort((a, b) => weightOf(p, b) - weightOf(p, a) || Math.abs(regions[b].flux) - Math.abs(regions[a].flux));
    const keep = kids[0];
    ids[keep] = prev[p].id;
    status[keep] = kids.length > 1 ? 'split' : 'continued';
    parentId[keep] = prev[p].id;
    born[keep] = prev[p].born;
    for (const c of kids.slice(1)) {
      ids[c] = next++;
      status[c] = 'split';
      parentId[c] = prev[p].id;
    }
    if (kids.length > 1) {
      events.push({ kind: 'split', time, id: prev[p].id, into: kids.map((c) => ids[c]), fluxes: kids.map((c) => regions[c].flux), flux: prev[p].flux });
    }
  }
  // Merges: parents linked to a region whose primary parent is another footpoint, and with no child of their own.
  const absorbed: number[][] = Array.from({ length: K }, () => []);
  for (const l of links) {
    if (children[l.p].length === 0 && primary[l.c] !== l.p && primary[l.c] >= 0) {
      const list = absorbed[l.c];
      if (!list.includes(l.p)) list.push(l.p);
    }
  }
  const absorbedInto = new Int32Array(P).fill(-1);
  for (let c = 0; c < K; c++) {
    const list = absorbed[c];
    if (list.length === 0) continue;
    // A parent linked to several regions joins the one it overlaps most.
    for (const p of list) if (absorbedInto[p] < 0 || weightOf(p, c) > weightOf(p, absorbedInto[p])) absorbedInto[p] = c;
  }
  for (let c = 0; c < K; c++) {
    const list = absorbed[c].filter((p) => absorbedInto[p] === c);
    if (list.length === 0) continue;
    const from = [primary[c], ...list];
    if (status[c] === 'continued') status[c] = 'merged';
    events.push({ kind: 'merged', time, id: ids[c], from: from.map((p) => prev[p].id), fluxes: from.map((p) => prev[p].flux), flux: regions[c].flux });
  }
  // Vanished: no child and absorbed nowhere.
  for (let p = 0; p < P; p++) {
    if (children[p].length > 0 || absorbedInto[p] >= 0) continue;
    const f = prev[p];
    let partner: number | null = null, best = Infinity;
    for (const q of [...prev, ...(previous?.recent ?? [])]) {
      if (q.polarity === f.polarity) continue;
      const gap = edgeGap(f, q);
      if (gap < s.contactPixels * Math.max(dx, dy) && gap < best) { best = gap; partner = q.id; }
    }
    const cause: VanishedCause = partner !== null ? 'cancellation' : f.touchesEdge ? 'edge' : 'unpaired';
    events.push({ kind: 'vanished', time, id: f.id, flux: f.flux, cause, partner });
  }
  // Appeared: new ids in raster order of the regions. The first frame only introduces footpoints.
  const fresh: number[] = [];
  for (let c = 0; c < K; c++) {
    if (primary[c] >= 0) continue;
    ids[c] = next++;
    fresh.push(c);
  }
  for (const c of fresh) {
    const r = regions[c];
    const me = { x: r.fluxWeighted.x, y: r.fluxWeighted.y, radius: regionRadius(r) };
    let partner: number | null = null, best = Infinity;
    for (const d of fresh) {
      const q = regions[d];
      if (q.polarity === r.polarity) continue;
      const gap = edgeGap(me, { x: q.fluxWeighted.x, y: q.fluxWeighted.y, radius: regionRadius(q) });
      if (gap < s.contactPixels * Math.max(dx, dy) && gap < best) { best = gap; partner = ids[d]; }
    }
    const cause: AppearedCause = partner !== null ? 'emergence' : r.touchesEdge ? 'edge' : 'unpaired';
    if (previous) events.push({ kind: 'appeared', time, id: ids[c], flux: r.flux, cause, partner });
  }
  // Relabel the map with the ids (a table by label; the last region of a label wins, as before).
  const lut = new Int32Array(regions.reduce((m, r) => Math.max(m, r.label), 0) + 1);
  regions.forEach((r, c) => { if (r.label > 0) lut[r.label] = ids[c]; });
  const out = relabel(labels, lut, new Int32Array(n));
  const assignments = regions.map((r, c) => ({ label: r.label, id: ids[c], status: status[c], parent: parentId[c], born: born[c] }));
  return { assignments, labels: out, events, nextId: next };
}

/**
 * The pixel loop of the overlap test, alone in a function of typed arrays (trackFootpoints runs
 * once per frame; V8 optimised it inside this loop and threw the code away after it every frame).
 * Each labelled pixel of the previous frame, shifted by its footpoint's predicted displacement,
 * counts toward counts[p * K + c] when it lands on a new region of the same polarity; keys gets
 * each pair the first time it is met; prevPixels[p] counts footpoint p's pixels. Returns how many
 * pairs were met.
 */
function overlapCounts(
  pl: Int32Array, labels: Int32Array, nx: number, ny: number, prevOf: Int32Array, regionOf: Int32Array,
  prevPolarity: Int8Array, regionPolarity: Int8Array, shiftX: Int32Array, shiftY: Int32Array, K: number,
  prevPixels: Float64Array, counts: Float64Array, keys: Int32Array,
): number {
  let met = 0;
  for (let i = 0; i < nx * ny; i++) {
    const id = pl[i];
    if (id <= 0 || id >= prevOf.length || prevOf[id] === 0) continue;
    const p = prevOf[id] - 1;
    prevPixels[p]++;
    const x = (i % nx) + shiftX[p], y = Math.floor(i / nx) + shiftY[p];
    if (x < 0 || y < 0 || x >= nx || y >= ny) continue;
    const l = labels[y * nx + x];
    if (l <= 0 || l >= regionOf.length || regionOf[l] === 0) continue;
    const c = regionOf[l] - 1;
    if (regionPolarity[c] !== prevPolarity[p]) continue;
    const key = p * K + c;
    if (counts[key] === 0) keys[met++] = key;
    counts[key]++;
  }
  return met;
}

/** out[i] = lut[labels[i]] for labels inside the table, 0 elsewhere (a pixel loop of its own, as above). */
function relabel(labels: Int32Array, lut: Int32Array, out: Int32Array): Int32Array {
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i];
    if (l > 0 && l < lut.length) out[i] = lut[l];
  }
  return out;
}
