// Footpoint ids, pair windings and spin budgets that run through the whole archive, although each
// worker's chunk tracks footpoints from scratch. Pure: it works on what the workers reported.
//
// A chunk is primed with the frames before its first sample (replay/chunkPriming.ts), the last of
// which the chunk before it analysed too, in the same way: same segmentation, so the same regions
// with bit-identical centroids. The chunk's tracker ids on those primer frames are mapped to the
// ids the merged run already gave the same regions (same polarity, same centroid), newest primer
// frame first; ids the chunk made after its primer get fresh ids above the largest used so far, in
// the order the tracker made them (which is the order a single run would have made them in). At
// the seam (the last primer frame with footpoints) each pair's winding and each footpoint's spin
// budget in the chunk differ from the merged run's by what the chunk had not seen; that difference
// is added to the chunk's later values for as long as the pair stays followed and along each
// footpoint's line of descent (the tracker carries a spin budget to the footpoint's children).
// Chunks are merged in time order, so the merged run is already relabelled up to each seam.

import type { FootpointReport } from '../core/footpoints/footpointReport.js';
import type { FootpointRow, PairRow } from '../core/footpoints/analyseFootpoints.js';
import type { FootpointEvent } from '../core/footpoints/tracking.js';
import { pairKey } from '../core/footpoints/pairWinding.js';
import type { FrameOutcome } from './analyseChunk.js';

/** A footpoint of a primer frame, as much as the mapping and the seam need. */
export interface PrimerFootpoint {
  readonly id: number;
  readonly polarity: 1 | -1;
  /** Flux-weighted centroid, Mm. */
  readonly x: number;
  readonly y: number;
  /** First seen, UTC ms. */
  readonly born: number;
  readonly spinBudget: number | null;
}

/** The footpoints of one primer frame of a chunk (a frame that only primes the analysis state). */
export interface PrimerTable {
  /** Position of the frame in the ordered archive. */
  readonly index: number;
  readonly footpoints: readonly PrimerFootpoint[];
  /** Pair windings in turns, [a, b, turns]: on the chunk's last primer table (the seam) only. */
  readonly windings?: readonly (readonly [number, number, number])[];
}

export interface ChunkOutput {
  /** The chunk's own frames (not its primer frames), in archive order. */
  readonly outcomes: readonly FrameOutcome[];
  /** Its primer frames with footpoints, in archive order. */
  readonly primers: readonly PrimerTable[];
}

export interface MergedChunks {
  /** Every chunk's outcomes in archive order, footpoint reports relabelled. */
  readonly outcomes: FrameOutcome[];
  /** Per chunk: its tracker ids -> the merged run's ids. */
  readonly idMaps: ReadonlyMap<number, number>[];
  /** Footpoints of seam frames that found no counterpart in the chunk before (they took fresh ids). */
  readonly unmatched: number;
}

interface MergedTable {
  readonly footpoints: readonly PrimerFootpoint[];
  /** Winding turns by pairKey of the merged ids. */
  readonly windings: ReadonlyMap<number, number>;
}

/** Centroids from the same segmentation agree to the last bit; allow rounding anyway. */
function sameCoordinate(a: number, b: number): boolean {
  return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a));
}

function mergedTable(report: FootpointReport): MergedTable {
  const windings = new Map<number, number>();
  const m = report.pairMatrix;
  if (m) {
    for (let i = 0; i < m.ids.length; i++) {
      for (let j = i + 1; j < m.ids.length; j++) {
        const w = m.windingTurns[i][j];
        if (w !== null) windings.set(pairKey(m.ids[i], m.ids[j]), w);
      }
    }
  }
  return {
    footpoints: (report.footpoints ?? []).map((r) => ({ id: r.id, polarity: r.polarity, x: r.x, y: r.y, born: r.born, spinBudget: r.spinBudget })),
    windings,
  };
}

const pairSize = (p: PairRow) => Math.abs(p.orbitExact ?? p.orbitPoint ?? 0);

export function mergeChunks(chunks: readonly ChunkOutput[]): MergedChunks {
  const wanted = new Set(chunks.flatMap((c) => c.primers.map((p) => p.index)));
  const tables = new Map<number, MergedTable>();
  const outcomes: FrameOutcome[] = [];
  const idMaps: Map<number, number>[] = [];
  let maxId = 0;
  let unmatched = 0;

  for (const chunk of chunks) {
    const idMap = new Map<number, number>();
    const taken = new Set<number>();
    const bornOf = new Map<number, number>();
    const match = (table: PrimerTable, global: MergedTable): PrimerFootpoint[] => {
      const missed: PrimerFootpoint[] = [];
      for (const f of table.footpoints) {
        if (idMap.has(f.id)) continue;
        const g = global.footpoints.find((q) => !taken.has(q.id) && q.polarity === f.polarity && sameCoordinate(q.x, f.x) && sameCoordinate(q.y, f.y));
        if (!g) { missed.push(f); continue; }
        idMap.set(f.id, g.id);
        taken.add(g.id);
        bornOf.set(f.id, g.born);
      }
      return missed;
    };
    // Offsets of spin budgets (by the chunk's ids, along descent) and windings (by merged pair).
    let spinOffset = new Map<number, number>();
    let windingOffset = new Map<number, number>();
    const seam = chunk.primers.at(-1);
    const seamGlobal = seam && tables.get(seam.index);
    if (seam && seamGlobal) {
      unmatched += match(seam, seamGlobal).length;
      const byId = new Map(seamGlobal.footpoints.map((f) => [f.id, f]));
      for (const f of seam.footpoints) {
        const g = idMap.has(f.id) ? byId.get(idMap.get(f.id)!) : undefined;
        if (g && g.spinBudget !== null && f.spinBudget !== null) spinOffset.set(f.id, g.spinBudget - f.spinBudget);
      }
      for (const [a, b, turns] of seam.windings ?? []) {
        const ga = idMap.get(a), gb = idMap.get(b);
        if (ga === undefined || gb === undefined) continue;
        const key = pairKey(ga, gb);
        const w = seamGlobal.windings.get(key);
        if (w !== undefined) windingOffset.set(key, w - turns);
      }
    } else if (seam) unmatched += seam.footpoints.length;
    // Footpoints that vanished just before the seam (late cancellation partners): older primer frames.
    for (const p of [...chunk.primers].reverse().slice(1)) {
      const global = tables.get(p.index);
      if (global) match(p, global);
    }

    const id = (local: number): number => {
      let g = idMap.get(local);
      if (g === undefined) { g = ++maxId; idMap.set(local, g); }
      return g;
    };
    for (const o of chunk.outcomes) {
      const report = o.extra?.footpoints as FootpointReport | undefined;
      if (!report || !report.footpoints) { outcomes.push(o); continue; }
      // New ids in the order the tracker made them (ascending).
      for (const r of [...report.footpoints].sort((p, q) => p.id - q.id)) id(r.id);
      const nextSpin = new Map<number, number>();
      const rows: FootpointRow[] = report.footpoints.map((r) => {
        const offset = r.spinBudget === null || r.parent === null ? 0 : spinOffset.get(r.parent) ?? 0;
        nextSpin.set(r.id, offset);
        return {
          ...r, id: id(r.id), parent: r.parent === null ? null : id(r.parent), born: bornOf.get(r.id) ?? r.born,
          spinBudget: r.spinBudget === null ? null : r.spinBudget + offset,
        };
      }).sort((p, q) => p.id - q.id);
      spinOffset = nextSpin;

      let pairMatrix = report.pairMatrix;
      const nextWinding = new Map<number, number>();
      if (pairMatrix) {
        const ids = pairMatrix.ids.map(id);
        const order = ids.map((_, k) => k).sort((p, q) => ids[p] - ids[q]);
        const permute = (m: (number | null)[][]) => order.map((p) => order.map((q) => m[p][q]));
        const winding = permute(pairMatrix.windingTurns);
        const sorted = order.map((k) => ids[k]);
        for (let i = 0; i < sorted.length; i++) {
          for (let j = i + 1; j < sorted.length; j++) {
            const w = winding[i][j];
            if (w === null) continue;
            const key = pairKey(sorted[i], sorted[j]);
            const offset = windingOffset.get(key);
            if (offset === undefined) continue;
            nextWinding.set(key, offset);
            winding[i][j] = winding[j][i] = w + offset;
          }
        }
        pairMatrix = {
          ids: sorted,
          orbitExact: pairMatrix.orbitExact ? permute(pairMatrix.orbitExact) : null,
          orbitPoint: permute(pairMatrix.orbitPoint),
          windingTurns: winding,
        };
      }
      const pairs: PairRow[] = report.pairs.map((p) => {
        const a = id(p.a), b = id(p.b);
        const offset = (pairMatrix ? nextWinding : windingOffset).get(pairKey(a, b)) ?? 0;
        return { ...p, a: Math.min(a, b), b: Math.max(a, b), windingTurns: p.windingTurns === null ? null : p.windingTurns + offset };
      }).sort((p, q) => pairSize(q) - pairSize(p) || p.a - q.a || p.b - q.b);
      // A pair no longer followed starts again from zero, in the chunk as in a single run.
      if (pairMatrix) windingOffset = nextWinding;

      const events: FootpointEvent[] = report.events.map((e) => {
        switch (e.kind) {
          case 'appeared': case 'vanished': return { ...e, id: id(e.id), partner: e.partner === null ? null : id(e.partner) };
          case 'merged': return { ...e, id: id(e.id), from: e.from.map(id) };
          case 'split': return { ...e, id: id(e.id), into: e.into.map(id) };
        }
      });
      const relabelled: FootpointReport = {
        ...report, footpoints: rows, pairs, events, ...(pairMatrix && { pairMatrix }),
        point: { ...report.point, motionUnknown: report.point.motionUnknown.map(id), spinUnknown: report.point.spinUnknown.map(id) },
      };
      outcomes.push({ ...o, extra: { ...o.extra, footpoints: relabelled } });
      if (wanted.has(o.index)) tables.set(o.index, mergedTable(relabelled));
    }
    idMaps.push(idMap);
  }
  return { outcomes, idMaps, unmatched };
}
