// One sample of a map on the sphere (whole Sun or patch): the rate, the differential-rotation share
// and the rest (the region's own motions), the rate by hemisphere, the label split when footpoints
// are given, and for a patch how far the planar engine is from the spherical answer. What the
// monitor and the batch call per frame for a spherical region (docs/sphere.md).
//
// A whole Sun is measured by spherical harmonics unless the settings ask for the pair sums. The
// pair sums are exact when their row-pair work is within the budget (a 360 x 180 whole Sun at the
// default); a larger patch is measured as the planar engine at full resolution
// plus the curvature correction found on a coarse copy (core/sphere/patchOnSphere.ts), for the
// rate and for the rotation share alike; then the hemispheres, the density map and the split are
// not given (they need the spherical potential at full resolution).

import { InputError } from '../inputError.js';
import type { RotationProfile } from './differentialRotation.js';
import { HOWARD_1990_SIDEREAL, defaultFrameRate, differentialRotationShare, rotationMotion } from './differentialRotation.js';
import { comparePatch, flattenPatch, rowPairWork } from './patchOnSphere.js';
import { sphericalRateSigma } from './sphericalRateNoise.js';
import { estimateNoiseLevel } from '../noiseLevel.js';
import { UNSIGNED_FLUX_FLOOR_NOISE } from '../rateSample.js';
import type { RateSample } from '../rateSample.js';
import { CM_PER_MM } from '../units.js';
import { createFluxKernel } from '../fluxKernel.js';
import { fluxTransport } from '../fluxTransport.js';
import { convolveTransport } from '../helicityFlux.js';
import { rateSigmaFromNoise } from '../rateUncertainty.js';
import { pixelSpinRate } from './pixelSpin.js';
import { potentialGradients } from './potentialGradient.js';
import { defaultDegree, harmonicGradients } from './sphericalHarmonics.js';
import { rateFromGradient, sphericalHelicityFlux } from './sphericalHelicityFlux.js';
import type { SphericalGrid } from './sphericalGrid.js';
import { nativeVelocity } from './sphericalGrid.js';
import type { SphericalSplit } from './sphericalSplit.js';
import { splitSphericalByLabels } from './sphericalSplit.js';
import { sphericalTransport } from './sphericalTransport.js';
import { sphereFigures } from './sphereColumns.js';

export interface SphereSettings {
  /** Rotation profile, sidereal microrad/s (default Howard, Harvey & Forgach 1990). */
  readonly rotationProfile?: RotationProfile;
  /** Rate of the frame the velocities are seen in, microrad/s (default Carrington's for CR axes, the Earth's orbit for HG). */
  readonly frameRateMicroradPerS?: number;
  /** Most row-pair work for an exact spherical sum (default 3.5e7, a 360 x 180 map). */
  readonly maxRowPairWork?: number;
  /** Noise of B_r per pixel, G (default: estimated from the map, core/noiseLevel.ts). */
  readonly noiseG?: number;
  /**
   * A whole Sun by spherical harmonics (default; core/sphere/sphericalHarmonics.ts) or by the exact
   * pair sums with each pixel's own spin (docs/sphere.md compares them). Patches use the pair sums.
   */
  readonly wholeSunEngine?: 'harmonics' | 'pairs';
  /** Degree of the series (default ny - 1). */
  readonly harmonicDegree?: number;
}

export interface SphereMaps {
  readonly bn: ArrayLike<number>;
  /** Toward increasing longitude and toward the north, km/s. */
  readonly vx: ArrayLike<number>;
  readonly vy: ArrayLike<number>;
  readonly labels?: Int32Array;
}

export interface SphereMeasurement {
  readonly wholeSun: boolean;
  /** How grad psi was made: spherical harmonics (whole Sun, no pixel's own spin) or the exact pair sums. */
  readonly engine: 'harmonics' | 'pairs';
  /** The rate, Mx^2/s: pixel pairs plus the pixels' own spin. */
  readonly total: number;
  readonly pairs: number;
  readonly selfPixel: number;
  /** The injection of the rotation profile alone, and the rest (the region's own motions), Mx^2/s. */
  readonly rotation: number;
  readonly ownMotions: number;
  /** The rate where B_r sits north (latitude >= 0) and south of the equator, Mx^2/s; null when not exact. */
  readonly north: number | null;
  readonly south: number | null;
  readonly rotationNorth: number | null;
  readonly rotationSouth: number | null;
  /** For a patch: the planar engine's rate and (planar - spherical) / |spherical| of the pair sums; coarsening 1 = exact. */
  readonly planar?: { readonly rate: number; readonly departure: number; readonly coarsening: number };
  readonly split?: SphericalSplit;
  /** G_A density, Mx^2 cm^-2 s^-1 (NaN where no data); absent when not exact. */
  readonly density?: Float64Array;
  readonly maskedFraction: number;
  /** 1-sigma of the total from the noise of B_r (linear propagation; for a patch beyond the budget, the planar engine's), Mx^2/s. */
  readonly sigmaTotal: number;
  readonly noiseG: number;
  /** Sum of |B_r| dS over valid pixels at or above 3 noise units, Mx (as core/rateSample.ts). */
  readonly unsignedFlux: number;
  readonly rotationProfile: RotationProfile;
  readonly frameRateMicroradPerS: number;
}

export function measureSphere(grid: SphericalGrid, maps: SphereMaps, settings: SphereSettings = {}, source = 'map'): SphereMeasurement {
  const profile = settings.rotationProfile ?? HOWARD_1990_SIDEREAL;
  for (const key of ['a', 'b', 'c'] as const) {
    if (!Number.isFinite(profile[key])) throw new InputError(source, `rotationProfile.${key}`, `${profile[key]} is not a number (microrad/s)`);
  }
  const frameRate = settings.frameRateMicroradPerS ?? defaultFrameRate(grid);
  if (!Number.isFinite(frameRate)) throw new InputError(source, 'frameRateMicroradPerS', `${frameRate} is not a number`);
  const budget = settings.maxRowPairWork ?? 3.5e7;
  const t = sphericalTransport(grid, maps.bn, maps.vx, maps.vy, source);
  const n = grid.nx * grid.ny;
  const noiseG = settings.noiseG ?? estimateNoiseLevel(maps.bn).sigma;
  let unsigned = 0;
  const floor = Number.isFinite(noiseG) && noiseG > 0 ? UNSIGNED_FLUX_FLOOR_NOISE * noiseG : 0;
  for (let i = 0; i < n; i++) {
    if (t.valid[i] && Math.abs(t.bn[i]) >= floor) unsigned += Math.abs(t.bn[i]) * grid.rowAreaMm2[Math.floor(i / grid.nx)] * CM_PER_MM * CM_PER_MM;
  }
  const harmonics = grid.wholeSun && (settings.wholeSunEngine ?? 'harmonics') === 'harmonics';
  const degree = settings.harmonicDegree ?? defaultDegree(grid);
  const base = {
    engine: (harmonics ? 'harmonics' : 'pairs') as 'harmonics' | 'pairs',
    wholeSun: grid.wholeSun, maskedFraction: t.maskedFraction, rotationProfile: profile, frameRateMicroradPerS: frameRate,
    noiseG, unsignedFlux: unsigned,
  };
  const noise = Number.isFinite(noiseG) ? noiseG : 0;

  if (!harmonics && rowPairWork(grid.nx, grid.ny) > budget) {
    if (grid.wholeSun) throw new InputError(source, 'NAXIS', `a whole-Sun map of ${grid.nx} x ${grid.ny} is beyond the work budget (maxRowPairWork ${budget}); give it at lower resolution or raise the budget`);
    const c = comparePatch(grid, t, { maxRowPairWork: budget });
    const m = rotationMotion(grid, profile, frameRate);
    const { ue, un } = nativeVelocity(grid, m.vx, m.vy);
    const none = new Float64Array(n);
    const rt = { ...t, ue, un };
    const rc = comparePatch(grid, rt, { maxRowPairWork: budget });
    const rotSelf = rateFromGradient(grid, t, { ge: none, gn: none }, ue, un, m.spin).selfPixel;
    const rotation = rc.sphericalPairs + rotSelf;
    const flat = flattenPatch(grid, t);
    const ft = fluxTransport(flat);
    const sigmaTotal = rateSigmaFromNoise(convolveTransport(createFluxKernel(flat), ft), flat.vx, flat.vy, ft.valid, noise, flat.dx, flat.dy);
    return {
      ...base, sigmaTotal, total: c.spherical, pairs: c.sphericalPairs, selfPixel: c.selfPixel, rotation, ownMotions: c.spherical - rotation,
      north: null, south: null, rotationNorth: null, rotationSouth: null,
      planar: { rate: c.planar, departure: c.planarDeparture, coarsening: c.coarsening },
    };
  }

  const gradients = (g: SphericalGrid, sources: readonly ArrayLike<number>[]) => (harmonics ? harmonicGradients(g, sources, degree) : potentialGradients(g, sources));
  const gradient = gradients(grid, [t.bn])[0];
  const f = sphericalHelicityFlux(grid, t, gradient, !harmonics);
  const rot = differentialRotationShare(grid, t, gradient, profile, frameRate, !harmonics);
  // By hemisphere: the per-pixel contributions of the rate and of the rotation share.
  const none = new Float64Array(n);
  const per = { pairs: new Float64Array(n), self: new Float64Array(n) };
  rateFromGradient(grid, t, gradient, t.ue, t.un, harmonics ? none : pixelSpinRate(grid, t.ue, t.un, t.valid), per);
  const m = rotationMotion(grid, profile, frameRate);
  const mv = nativeVelocity(grid, m.vx, m.vy);
  const perRot = { pairs: new Float64Array(n), self: new Float64Array(n) };
  rateFromGradient(grid, t, gradient, mv.ue, mv.un, harmonics ? none : m.spin, perRot);
  let north = 0, south = 0, rn = 0, rs = 0;
  for (let i = 0; i < n; i++) {
    const v = per.pairs[i] + per.self[i], r = perRot.pairs[i] + perRot.self[i];
    if (grid.latDeg[i] >= 0) { north += v; rn += r; } else { south += v; rs += r; }
  }
  let planar: SphereMeasurement['planar'];
  if (!grid.wholeSun) {
    const c = comparePatch(grid, t, { maxRowPairWork: budget, gradient });
    planar = { rate: c.planar, departure: c.planarDeparture, coarsening: c.coarsening };
  }
  const split = maps.labels ? splitSphericalByLabels(grid, t, maps.labels, { total: f.total, gradients, pixelSpin: !harmonics }) : undefined;
  return {
    ...base, sigmaTotal: sphericalRateSigma(grid, t, gradient, noise, !harmonics), total: f.total, pairs: f.pairs, selfPixel: f.selfPixel, rotation: rot.total, ownMotions: f.total - rot.total,
    north, south, rotationNorth: rn, rotationSouth: rs, density: f.density,
    ...(planar && { planar }), ...(split && { split }),
  };
}

/**
 * The rate sample of a spherical measurement, for the budget, the rules and the series like any
 * other (core/accumulate.ts): spin, orbit and background from the label split when there is one,
 * otherwise all background; the G_A total is the total (the sphere has one form); flags
 * 'whole-sun' or 'sphere-patch', with 'no-footpoints' and 'masked-pixels' as measureRate gives them.
 * It carries the measurement's figures (`sphere`) for the sphere's series columns.
 */
export function sphereRateSample(m: SphereMeasurement, time: number, dtS: number, velocityMethod = 'given'): RateSample {
  const flags: string[] = [m.wholeSun ? 'whole-sun' : 'sphere-patch'];
  if (m.maskedFraction > 0) flags.push('masked-pixels');
  const split = m.split && m.split.ids.length > 0 ? m.split : undefined;
  if (!split) flags.push('no-footpoints');
  return {
    time, dtS, total: m.total, totalGa: m.total,
    spin: split ? split.spinTotal : 0, orbit: split ? split.orbitTotal : 0, background: split ? split.background : m.total,
    sigmaTotal: m.sigmaTotal, sigmaSpin: 0, sigmaOrbit: 0, sigmaMotion: 0, noiseG: m.noiseG, unsignedFlux: m.unsignedFlux,
    velocityMethod, splitMethod: split ? 'labels' : 'none', maskedFraction: m.maskedFraction, flags,
    sphere: sphereFigures(m),
  };
}
