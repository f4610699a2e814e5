// Footpoints as the monitor's API and the page see them (docs/api.md "Footpoint"), built from the
// footpoint report the analysis stores (core/footpoints/footpointReport.ts). One spelling on the
// wire: snake_case, as the series columns; the analysis' own camelCase rows stay inside core.
//
//   footpointsForWire(footpointReport(analysis, true)); // [{ id: 3, spin: -1.2e36, partners: [...] }, ...]

import type { FootpointRow } from '../footpoints/analyseFootpoints.js';
import type { FootpointReport } from '../footpoints/footpointReport.js';

export interface OrbitPartner {
  readonly id: number;
  /** Orbit of the pair, Mx^2/s (the exact split's, else the point estimate). */
  readonly orbit: number;
}

export interface WireFootpoint {
  readonly id: number;
  readonly polarity: 1 | -1;
  readonly status: string;
  /** Id of the footpoint of the previous frame it came from (null when new). */
  readonly parent: number | null;
  /** Signed flux, Mx. */
  readonly flux: number;
  /** Flux-weighted centroid, Mm. */
  readonly x: number;
  readonly y: number;
  /** Area, Mm^2; peak |Bn|, G. */
  readonly area: number;
  readonly peak: number;
  /** Axis ratio of the flux-weighted second moments (null for a region one pixel wide). */
  readonly elongation: number | null;
  readonly touches_edge: boolean;
  /** Rotation rate used, rad/s counter-clockwise seen from the corona, and which measurement it is. */
  readonly omega: number | null;
  readonly omega_method: 'velocity' | 'pattern' | 'unobservable';
  /** 1-sigma of the pattern rotation, rad/s, and why there is none (a round footpoint, noise). */
  readonly omega_error: number | null;
  readonly omega_note: string | null;
  /** Spin of the footpoint, Mx^2/s: the exact split's (the point estimate when there is none). */
  readonly spin: number | null;
  readonly spin_point: number | null;
  /** Time integral of its spin since it was first seen, Mx^2. */
  readonly spin_budget: number | null;
  /** The footpoints it orbits with, largest |orbit| first. */
  readonly partners: readonly OrbitPartner[];
}

/** The footpoints of a stored report (with its table), in the wire's shape; [] without a table. */
export function footpointsForWire(report: Pick<FootpointReport, 'footpoints' | 'pairMatrix'> | null | undefined): WireFootpoint[] {
  const rows = report?.footpoints ?? [];
  const m = report?.pairMatrix;
  const ids = m?.ids ?? [];
  return rows.map((row) => footpointForWire(row, partnersOf(row.id, ids, m)));
}

function partnersOf(id: number, ids: readonly number[], m: FootpointReport['pairMatrix']): OrbitPartner[] {
  const i = ids.indexOf(id);
  if (i < 0 || !m) return [];
  const partners: OrbitPartner[] = [];
  ids.forEach((other, j) => {
    if (j === i) return;
    const orbit = m.orbitExact?.[i]?.[j] ?? m.orbitPoint[i]?.[j] ?? null;
    if (orbit !== null) partners.push({ id: other, orbit });
  });
  return partners.sort((a, b) => Math.abs(b.orbit) - Math.abs(a.orbit));
}

function footpointForWire(row: FootpointRow, partners: OrbitPartner[]): WireFootpoint {
  return {
    id: row.id, polarity: row.polarity, status: row.status, parent: row.parent, flux: row.flux, x: row.x, y: row.y,
    area: row.area, peak: row.peak, elongation: row.elongation, touches_edge: row.touchesEdge,
    omega: row.omegaSource === null ? null : row.omega,
    omega_method: row.omegaSource ?? 'unobservable',
    omega_error: row.omegaPatternError,
    omega_note: row.patternNote,
    spin: row.spinExact ?? row.spinPoint,
    spin_point: row.spinPoint,
    spin_budget: row.spinBudget,
    partners,
  };
}

/** Each footpoint id's centroids, oldest first, over stored reports given oldest first (Mm). */
export function tracksForWire(reports: readonly (Pick<FootpointReport, 'footpoints'> | null | undefined)[]): Record<string, [number, number][]> {
  const tracks: Record<string, [number, number][]> = {};
  for (const r of reports) {
    for (const fp of r?.footpoints ?? []) {
      if (!Number.isFinite(fp.x) || !Number.isFinite(fp.y)) continue;
      (tracks[String(fp.id)] ??= []).push([fp.x, fp.y]);
    }
  }
  return tracks;
}
