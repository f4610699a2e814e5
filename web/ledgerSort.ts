// Sorting the footpoint ledger. Missing values (an unobservable rotation, no spin) always go last,
// whatever the direction, so sorting never buries the measured rows under blanks.

import type { WireFootpoint } from './wire.js';

export type LedgerKey = 'id' | 'polarity' | 'flux' | 'omega' | 'spin' | 'partner';
export type SortDirection = 'ascending' | 'descending';

/** The largest |orbit| partner, by |orbit| (partners are meant to come first-largest; we do not rely on it). */
export function largestPartner(fp: WireFootpoint): { id: number | string; orbit: number } | undefined {
  let best: { id: number | string; orbit: number } | undefined;
  for (const p of fp.partners ?? []) {
    if (!Number.isFinite(p.orbit)) continue;
    if (best === undefined || Math.abs(p.orbit) > Math.abs(best.orbit)) best = p;
  }
  return best;
}

/** Partners ordered by |orbit|, largest first, at most `count`. */
export function topPartners(fp: WireFootpoint, count = 3): { id: number | string; orbit: number }[] {
  return (fp.partners ?? [])
    .filter((p) => Number.isFinite(p.orbit))
    .slice()
    .sort((a, b) => Math.abs(b.orbit) - Math.abs(a.orbit))
    .slice(0, count);
}

function keyValue(fp: WireFootpoint, key: LedgerKey): number | string | undefined {
  switch (key) {
    case 'id': return fp.id;
    case 'polarity': return fp.polarity;
    case 'flux': return Number.isFinite(fp.flux) ? Math.abs(fp.flux) : undefined;
    case 'omega': return fp.omega !== null && Number.isFinite(fp.omega) ? fp.omega : undefined;
    case 'spin': return fp.spin !== null && Number.isFinite(fp.spin) ? fp.spin : undefined;
    case 'partner': {
      const p = largestPartner(fp);
      return p === undefined ? undefined : Math.abs(p.orbit);
    }
  }
}

function compareValues(a: number | string, b: number | string): number {
  if (typeof a === 'number' && typeof b === 'number') return a - b;
  // Ids may be numbers or strings: numeric-aware text order (fp2 before fp10).
  return String(a).localeCompare(String(b), 'en', { numeric: true });
}

/** A sorted copy; equal keys keep their incoming order (stable), missing values last. */
export function sortFootpoints(rows: readonly WireFootpoint[], key: LedgerKey, direction: SortDirection): WireFootpoint[] {
  const sign = direction === 'ascending' ? 1 : -1;
  return rows
    .map((fp, i) => ({ fp, i, v: keyValue(fp, key) }))
    .sort((a, b) => {
      if (a.v === undefined && b.v === undefined) return a.i - b.i;
      if (a.v === undefined) return 1;
      if (b.v === undefined) return -1;
      return sign * compareValues(a.v, b.v) || a.i - b.i;
    })
    .map((r) => r.fp);
}
