// A region on the sphere in words (docs/sphere.md): whether rows carry the sphere's columns, the
// newest rotation share and hemisphere budgets, and the caveat on the split. No DOM.

import type { SeriesPoint } from './seriesMerge.js';
import { formatHelicity, formatRate, formatSci } from './unitFormat.js';
import type { WireSample } from './wire.js';

/** The one-line caveat (docs/sphere.md, "Spin and orbit on a sphere"). */
export const SPHERE_CAVEAT =
  'On a sphere spin and orbit do not separate as in the plane: a footpoint carried round the Sun turns mutual helicity into its own, so compare the split term by term only with other spherical results.';

const has = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v);

/** Whether any row carries the sphere's columns (a whole-Sun or heliographic region). */
export function carriesSphere(series: readonly SeriesPoint[]): boolean {
  return series.some((p) => has(p.s.rate_rotation) || has(p.s.rate_own_motions) || has(p.s.budget_north));
}

/** The newest sample's sphere figures in words: the rotation share, the hemisphere budgets. */
export function sphereWords(s: WireSample | undefined): string {
  if (!s) return '';
  const parts: string[] = [];
  if (has(s.rate_rotation) && has(s.rate_total) && s.rate_total !== 0) {
    parts.push(`newest: rotation ${formatRate(s.rate_rotation)} of ${formatRate(s.rate_total)} (${formatSci(Math.round((100 * s.rate_rotation) / s.rate_total), 3)} %), own motions ${formatRate(s.rate_own_motions)}`);
  }
  if (has(s.budget_north) || has(s.budget_south)) {
    parts.push(`budget north ${formatHelicity(s.budget_north)}, south ${formatHelicity(s.budget_south)}`);
  }
  if (has(s.budget_rotation)) parts.push(`by rotation ${formatHelicity(s.budget_rotation)}`);
  if (has(s.rate_north) || has(s.rate_south)) parts.push(`rate north ${formatRate(s.rate_north)}, south ${formatRate(s.rate_south)}`);
  if (has(s.planar_departure)) parts.push(`a flat-patch answer would differ by ${formatSci(100 * s.planar_departure, 2)} %`);
  return parts.join(' · ');
}
