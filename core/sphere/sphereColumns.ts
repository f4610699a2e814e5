// The series figures of a spherical region (core/seriesColumns.ts names the columns): the
// differential-rotation share and the rest, the rate by hemisphere, their budgets, and for a patch
// the planar engine's departure. The budgets are the running trapezoid integrals of core/budget.ts
// (same gaps, same rule about bridging them), one per rate; their 1-sigma is not given here.

import type { BudgetSettings, BudgetState } from '../budget.js';
import { accumulateBudget, emptyBudget } from '../budget.js';
import type { RateSample } from '../rateSample.js';
import type { SphereMeasurement } from './measureSphere.js';

export interface SphereColumns {
  /** Injection of the rotation profile alone, and the rest (the region's own motions), Mx^2/s. */
  readonly rate_rotation: number | null;
  readonly rate_own_motions: number | null;
  /** Rate where B_r sits north / south of the equator, Mx^2/s. */
  readonly rate_north: number | null;
  readonly rate_south: number | null;
  /** Running integrals, Mx^2. */
  readonly budget_rotation: number | null;
  readonly budget_north: number | null;
  readonly budget_south: number | null;
  /** (planar - spherical) / |spherical| of a patch's pair sums (null for a whole Sun). */
  readonly planar_departure: number | null;
}

export interface SphereBudgetState {
  readonly rotation: BudgetState;
  readonly north: BudgetState;
  readonly south: BudgetState;
}

export function emptySphereBudget(): SphereBudgetState {
  return { rotation: emptyBudget(), north: emptyBudget(), south: emptyBudget() };
}

/** A sample carrying one rate as its total (what the budget integrates), no split and no error. */
function oneRate(time: number, rate: number): RateSample {
  return {
    time, dtS: 0, total: rate, totalGa: rate, spin: 0, orbit: 0, background: rate,
    sigmaTotal: 0, sigmaSpin: 0, sigmaOrbit: 0, sigmaMotion: 0, noiseG: NaN,
    velocityMethod: 'given', splitMethod: 'none', maskedFraction: 0, flags: [],
  };
}

const finite = (v: number | null | undefined): number | null => (v !== null && v !== undefined && Number.isFinite(v) ? v : null);

/**
 * What the columns need of a measurement: carried on the rate sample (RateSample.sphere, plain
 * numbers) from the per-frame step to the accumulation step.
 */
export type SphereFigures = Pick<SphereMeasurement, 'wholeSun' | 'rotation' | 'ownMotions' | 'north' | 'south' | 'rotationNorth' | 'rotationSouth' | 'planar'>;

/** The figures of a measurement, without its maps and split (small enough to travel with the sample). */
export function sphereFigures(m: SphereMeasurement): SphereFigures {
  return {
    wholeSun: m.wholeSun, rotation: m.rotation, ownMotions: m.ownMotions, north: m.north, south: m.south,
    rotationNorth: m.rotationNorth, rotationSouth: m.rotationSouth,
    ...(m.planar && { planar: { rate: m.planar.rate, departure: m.planar.departure, coarsening: m.planar.coarsening } }),
  };
}

/** Adds one sample's measurement (samples in time order) and gives its columns. */
export function accumulateSphere(
  state: SphereBudgetState, time: number, m: SphereFigures, settings: BudgetSettings = {},
): { state: SphereBudgetState; columns: SphereColumns } {
  const rot = accumulateBudget(state.rotation, oneRate(time, m.rotation), settings);
  let north = state.north, south = state.south;
  let bn: number | null = null, bs: number | null = null;
  if (m.north !== null && m.south !== null) {
    const a = accumulateBudget(state.north, oneRate(time, m.north), settings);
    const b = accumulateBudget(state.south, oneRate(time, m.south), settings);
    north = a.state; south = b.state;
    bn = a.point.values.total; bs = b.point.values.total;
  }
  return {
    state: { rotation: rot.state, north, south },
    columns: {
      rate_rotation: finite(m.rotation),
      rate_own_motions: finite(m.ownMotions),
      rate_north: finite(m.north),
      rate_south: finite(m.south),
      budget_rotation: finite(rot.point.values.total),
      budget_north: finite(bn),
      budget_south: finite(bs),
      planar_departure: finite(m.planar?.departure),
    },
  };
}
