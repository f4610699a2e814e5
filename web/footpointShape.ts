// Footpoints as the page uses them, from what the footpoints route sends (the wire's shape:
// core/wire/footpointWire.ts, docs/api.md), checked field by field: the page never trusts a
// message to be whole.
// Entries without a finite position or id are dropped rather than drawn at the origin.

import type { OrbitPartner, WireFootpoint } from './wire.js';

function num(v: unknown): number | null {
  return typeof v === 'number' && Number.isFinite(v) ? v : null;
}

export function normaliseFootpoint(raw: unknown): WireFootpoint | undefined {
  if (typeof raw !== 'object' || raw === null) return undefined;
  const r = raw as Record<string, unknown>;
  const id = typeof r.id === 'number' && Number.isInteger(r.id) ? r.id : undefined;
  const x = num(r.x);
  const y = num(r.y);
  if (id === undefined || x === null || y === null) return undefined;
  const flux = num(r.flux) ?? 0;
  const omega = num(r.omega);
  const methodRaw = r.omega_method;
  const omega_method: WireFootpoint['omega_method'] =
    methodRaw === 'velocity' || methodRaw === 'pattern' ? methodRaw : omega === null ? 'unobservable' : 'velocity';
  const partners: OrbitPartner[] = Array.isArray(r.partners)
    ? (r.partners as unknown[]).flatMap((p) => {
        const q = p as Record<string, unknown> | null;
        const orbit = num(q?.orbit);
        const pid = q?.id;
        return orbit !== null && typeof pid === 'number' ? [{ id: pid, orbit }] : [];
      })
    : [];
  const outline = Array.isArray(r.outline)
    ? (r.outline as unknown[]).filter((p): p is [number, number] => Array.isArray(p) && num(p[0]) !== null && num(p[1]) !== null)
    : undefined;
  return {
    id, x, y, flux,
    polarity: r.polarity === -1 || (r.polarity === undefined && flux < 0) ? -1 : 1,
    area: num(r.area) ?? 0,
    omega: omega_method === 'unobservable' ? null : omega,
    omega_method,
    spin: num(r.spin),
    spin_point: num(r.spin_point),
    partners,
    ...(num(r.omega_error) !== null ? { omega_error: num(r.omega_error) } : {}),
    ...(typeof r.omega_note === 'string' ? { omega_note: r.omega_note } : {}),
    ...(outline && outline.length >= 3 ? { outline } : {}),
  };
}

export function normaliseFootpoints(list: unknown): WireFootpoint[] {
  if (!Array.isArray(list)) return [];
  return list.flatMap((raw) => {
    const fp = normaliseFootpoint(raw);
    return fp ? [fp] : [];
  });
}

/** Tracks keyed by footpoint id, each a list of finite [x, y] Mm points. */
export function normaliseTracks(raw: unknown): Record<string, [number, number][]> {
  const out: Record<string, [number, number][]> = {};
  if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) return out;
  for (const [id, pts] of Object.entries(raw as Record<string, unknown>)) {
    if (!Array.isArray(pts)) continue;
    const clean = pts.filter((p): p is [number, number] => Array.isArray(p) && num(p[0]) !== null && num(p[1]) !== null);
    if (clean.length > 0) out[id] = clean;
  }
  return out;
}
