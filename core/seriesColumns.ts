// The one mapping from a rate sample and the budget point after it to the named fields of the
// series (docs/api.md "Sample"), which are also the batch CSV columns, in the documented order.

import type { BudgetPoint } from './budget.js';
import type { PatchCentre } from './frameAssembly/wcs.js';
import type { RateSample } from './rateSample.js';

/** Column order: the nine fixed first columns of docs/api.md, then the rest. */
export const SERIES_COLUMNS = [
  'time', 'dt_s', 'rate_total', 'rate_spin', 'rate_orbit', 'rate_background',
  'budget_total', 'budget_spin', 'budget_orbit', 'budget_background',
  'rate_total_ga', 'rate_emergence', 'rate_shear', 'sigma_rate_total', 'sigma_budget_total',
  'sigma_rate_spin', 'sigma_rate_orbit', 'velocity_method', 'split_method', 'noise_g', 'masked_fraction', 'flags', 'frame_id',
  'flux_unsigned', 'budget_normalised', 'centre_lon_deg', 'centre_lat_deg', 'centre_disk_angle_deg',
  'rate_rotation', 'rate_own_motions', 'rate_north', 'rate_south', 'budget_rotation', 'budget_north', 'budget_south', 'planar_departure',
  'braid_entropy_rate', 'braid_entropy_rate_run', 'braid_strands', 'braid_flagged_triples',
] as const;
export type SeriesColumn = (typeof SERIES_COLUMNS)[number];

export interface SeriesRow {
  /** ISO 8601 UTC. */
  readonly time: string;
  readonly dt_s: number;
  readonly rate_total: number;
  readonly rate_spin: number;
  readonly rate_orbit: number;
  readonly rate_background: number;
  readonly budget_total: number;
  readonly budget_spin: number;
  readonly budget_orbit: number;
  readonly budget_background: number;
  readonly rate_total_ga: number;
  readonly rate_emergence: number | null;
  readonly rate_shear: number | null;
  readonly sigma_rate_total: number;
  readonly sigma_budget_total: number;
  /** 1-sigma of spin and orbit from the footpoint motions' errors (0 when the velocity was given). */
  readonly sigma_rate_spin: number;
  readonly sigma_rate_orbit: number;
  readonly velocity_method: string;
  readonly split_method: string;
  readonly noise_g: number | null;
  readonly masked_fraction: number;
  readonly flags: readonly string[];
  readonly frame_id: number | null;
  /** Unsigned flux of the frame the rate was taken on, Mx (pixels at or above 3 noise units; core/rateSample.ts). */
  readonly flux_unsigned: number | null;
  /**
   * The budget over the unsigned flux squared, H / Phi^2 (dimensionless): a flux tube of T turns
   * carries H = T Phi_tube^2 (Moffatt & Ricca 1992, from memory), so a balanced bipole whose flux
   * is all in one tube gives H / Phi^2 = T / 4 with Phi = 2 Phi_tube. Null without a flux.
   */
  readonly budget_normalised: number | null;
  /**
   * The patch centre in Stonyhurst heliographic longitude and latitude, degrees, and its angle from
   * disk centre seen from the Sun's centre (mu = cos of it), when the frames' headers give them
   * (core/frameAssembly/wcs.ts); null otherwise.
   */
  readonly centre_lon_deg: number | null;
  readonly centre_lat_deg: number | null;
  readonly centre_disk_angle_deg: number | null;
  /**
   * The braid of the largest footpoints (core/braid/, docs/braids.md): entropy per hour of the
   * sliding window and of the whole run, the strands followed, and the window's triples braided
   * with no net crossing of any pair (unseen by the pair budget). Filled by the batch and the
   * monitor from core/braid/braidColumns.ts; absent (empty CSV cells) where the braid is not followed.
   */
  readonly braid_entropy_rate?: number | null;
  readonly braid_entropy_rate_run?: number | null;
  readonly braid_strands?: number | null;
  readonly braid_flagged_triples?: number | null;
  /**
   * A region on the sphere (core/sphere/, docs/sphere.md): the injection of the differential-rotation
   * profile alone and the rest (the region's own motions), the rate and budget where B_r sits north and
   * south of the equator, the rotation share's budget (Mx^2/s, Mx^2), and for a patch the planar
   * engine's departure from the spherical answer. Filled from core/sphere/sphereColumns.ts; absent
   * (empty CSV cells) for planar regions.
   */
  readonly rate_rotation?: number | null;
  readonly rate_own_motions?: number | null;
  readonly rate_north?: number | null;
  readonly rate_south?: number | null;
  readonly budget_rotation?: number | null;
  readonly budget_north?: number | null;
  readonly budget_south?: number | null;
  readonly planar_departure?: number | null;
}

const finiteOrNull = (v: number | undefined): number | null => (v !== undefined && Number.isFinite(v) ? v : null);

/** The columns of a series row that come from the sample alone (what `helicord rate` prints). */
export type SampleColumns = Omit<SeriesRow, 'budget_total' | 'budget_spin' | 'budget_orbit' | 'budget_background' | 'sigma_budget_total' | 'budget_normalised' | 'frame_id'>;

/** The sample's own columns, spelled as in the series; `centre` where it was taken on the Sun. */
export function sampleColumns(sample: RateSample, centre: PatchCentre | undefined = sample.centre): SampleColumns {
  return {
    time: new Date(sample.time).toISOString(),
    dt_s: sample.dtS,
    rate_total: sample.total,
    rate_spin: sample.spin,
    rate_orbit: sample.orbit,
    rate_background: sample.background,
    rate_total_ga: sample.totalGa,
    rate_emergence: finiteOrNull(sample.emergence),
    rate_shear: finiteOrNull(sample.shear),
    sigma_rate_total: sample.sigmaTotal,
    sigma_rate_spin: sample.sigmaSpin ?? 0,
    sigma_rate_orbit: sample.sigmaOrbit ?? 0,
    velocity_method: sample.velocityMethod,
    split_method: sample.splitMethod,
    noise_g: finiteOrNull(sample.noiseG),
    masked_fraction: sample.maskedFraction,
    flags: [...sample.flags],
    flux_unsigned: finiteOrNull(sample.unsignedFlux),
    centre_lon_deg: finiteOrNull(centre?.lonDeg),
    centre_lat_deg: finiteOrNull(centre?.latDeg),
    centre_disk_angle_deg: finiteOrNull(centre?.diskAngleDeg),
  };
}

/**
 * The series row of one sample and the budget point it produced; `centre`, where the sample was
 * taken on the Sun, when the frames' headers say.
 */
export function seriesRow(sample: RateSample, point: BudgetPoint, frameId: number | null = null, centre: PatchCentre | undefined = sample.centre): SeriesRow {
  const flux = sample.unsignedFlux;
  const own = sampleColumns(sample, centre);
  return {
    time: own.time,
    dt_s: own.dt_s,
    rate_total: own.rate_total,
    rate_spin: own.rate_spin,
    rate_orbit: own.rate_orbit,
    rate_background: own.rate_background,
    budget_total: point.values.total,
    budget_spin: point.values.spin,
    budget_orbit: point.values.orbit,
    budget_background: point.values.background,
    rate_total_ga: own.rate_total_ga,
    rate_emergence: own.rate_emergence,
    rate_shear: own.rate_shear,
    sigma_rate_total: own.sigma_rate_total,
    sigma_budget_total: point.sigmaTotal,
    sigma_rate_spin: own.sigma_rate_spin,
    sigma_rate_orbit: own.sigma_rate_orbit,
    velocity_method: own.velocity_method,
    split_method: own.split_method,
    noise_g: own.noise_g,
    masked_fraction: own.masked_fraction,
    flags: own.flags,
    frame_id: frameId,
    flux_unsigned: own.flux_unsigned,
    budget_normalised: flux !== undefined && flux > 0 ? finiteOrNull(point.values.total / (flux * flux)) : null,
    centre_lon_deg: own.centre_lon_deg,
    centre_lat_deg: own.centre_lat_deg,
    centre_disk_angle_deg: own.centre_disk_angle_deg,
  };
}

/** One CSV cell: empty for no value, lists joined by ";", quoted when it holds a comma, quote or line break. */
export function csvCell(v: unknown): string {
  if (v === null || v === undefined) return '';
  if (Array.isArray(v)) return csvCell(v.join(';'));
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  const s = String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** CSV text (header line, then one line per row; empty cell = no value; flags joined by ';'). */
export function seriesCsv(rows: readonly SeriesRow[]): string {
  const lines = [SERIES_COLUMNS.join(',')];
  for (const r of rows) lines.push(SERIES_COLUMNS.map((c) => csvCell(r[c])).join(','));
  return lines.join('\n') + '\n';
}
