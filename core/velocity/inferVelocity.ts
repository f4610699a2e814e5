// The one entry point of velocity inference: the footpoint velocity between two frames of a
// region, at their mid-time, by the method the region chose.
//
// Convention (that of core/fluxTransport.ts): with method 'lct' or 'dave', or without bx, by,
// (vx, vy) is the footpoint velocity u itself and there is no vz; fluxTransport then forms Bn u.
// With 'dave4vm' (both frames carry bx, by), (vx, vy) is the horizontal plasma velocity v_t and vz
// the normal velocity v_n (+z into the corona); fluxTransport then forms Bn v_t - v_n B_t.

import type { Frame } from '../frame.js';
import { checkFrame } from '../frame.js';
import { InputError } from '../inputError.js';
import { KM_PER_MM } from '../units.js';
import { differentialAffineVelocity, midAndRate } from './differentialAffine.js';
import type { AffineFitWorkspace } from './fitWindowPasses.js';
import { localCorrelationTracking } from './lct.js';
import { pairNoise } from './pairNoise.js';
import { roundFeatures } from './roundFeatures.js';
import { vectorAffineVelocity } from './vectorAffine.js';
import type { VelocityMethod, VelocitySettings } from './velocitySettings.js';
import { resolveVelocitySettings } from './velocitySettings.js';

export interface InferredVelocity {
  /** Footpoint velocity u (or plasma v_t with vz), km/s, NaN where not inferred. */
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  /** Normal plasma velocity, km/s (+z into the corona); only from dave4vm. */
  readonly vz?: Float64Array;
  readonly method: VelocityMethod;
  /** The settings in force (defaults filled in). */
  readonly settings: VelocitySettings;
  /** Mid-time of the pair (UTC ms) and the interval (s). */
  readonly time: number;
  readonly dtS: number;
  /** The field threshold applied, G (after converting noise units). */
  readonly thresholdG: number;
  /** Share of pixels with a velocity. */
  readonly validFraction: number;
  /** Caveats and what was done, in words. */
  readonly notes: string[];
}

export const ROTATION_CAVEAT =
  'Rotation of axisymmetric features is not observable from the pattern: a round footpoint spinning in place ' +
  'leaves the frames unchanged, so its spin, and the helicity that spin injects, is missing from these velocities.';

function sourceOf(f: Frame, fallback: string): string {
  return f.provenance?.source ?? fallback;
}

/** Throws InputError when the pair cannot give a velocity (shapes, pixel sizes, times, no data). */
export function checkFramePair(a: Frame, b: Frame, maxIntervalS: number): number {
  const sa = sourceOf(a, 'first frame'), sb = sourceOf(b, 'second frame');
  checkFrame(a, sa);
  checkFrame(b, sb);
  if (a.nx !== b.nx || a.ny !== b.ny) {
    throw new InputError(sb, 'nx/ny', `grid is ${b.nx}x${b.ny} but ${sa} is ${a.nx}x${a.ny}: frames of a pair must have the same shape`);
  }
  const close = (p: number, q: number) => Math.abs(p - q) <= 1e-9 * Math.max(Math.abs(p), Math.abs(q));
  if (!close(a.dx, b.dx) || !close(a.dy, b.dy)) {
    throw new InputError(sb, 'dx/dy', `pixel size is ${b.dx} x ${b.dy} Mm but ${sa} has ${a.dx} x ${a.dy} Mm: frames must share the pixel size`);
  }
  const dtS = (b.time - a.time) / 1000;
  if (!(dtS > 0)) {
    throw new InputError(sb, 'time', `must be later than ${sa} (interval ${dtS} s): velocity needs dt > 0`);
  }
  if (dtS > maxIntervalS) {
    throw new InputError(sb, 'time', `is ${dtS} s after ${sa}, more than the ${maxIntervalS} s allowed between frames of a pair`);
  }
  return dtS;
}

/**
 * Infers the velocity between frames `a` and `b` (b later). Throws InputError on bad input.
 * `workspace`: the caller's, kept from pair to pair, for the affine fits' SIMD kernels (same numbers).
 * `pairNoiseG`: pairNoise(a.bn, b.bn) when the caller has found it already (the same value is
 * then not found twice); the result is the same either way.
 */
export function inferVelocity(
  a: Frame, b: Frame, settings: Partial<VelocitySettings> = {}, workspace?: AffineFitWorkspace, pairNoiseG?: number,
): InferredVelocity {
  const s = resolveVelocitySettings(settings);
  const dtS = checkFramePair(a, b, s.maxIntervalS);
  const { nx, ny, dx, dy } = a;
  const n = nx * ny;
  const vectorData = a.bx !== undefined && a.by !== undefined && b.bx !== undefined && b.by !== undefined;
  const method: VelocityMethod = s.method === 'auto' ? (vectorData ? 'dave4vm' : 'dave') : s.method;
  if (method === 'dave4vm' && !vectorData) {
    const lacking = a.bx !== undefined && a.by !== undefined ? b : a;
    throw new InputError(sourceOf(lacking, lacking === a ? 'first frame' : 'second frame'), 'bx/by', 'dave4vm needs the horizontal field in both frames');
  }
  const notes: string[] = [ROTATION_CAVEAT];

  // The noise of bn: given, or estimated from the frame-to-frame difference when the threshold or
  // the noise correction needs it.
  let noise = s.threshold.unit === 'noise' ? s.threshold.noise : undefined;
  if (noise === undefined && (s.threshold.unit === 'noise' || (s.noiseCorrection && method !== 'lct'))) {
    noise = pairNoiseG ?? pairNoise(a.bn, b.bn);
    notes.push(`Noise level estimated from the frame-to-frame difference: ${noise.toPrecision(3)} G.`);
  }
  const thresholdG = s.threshold.unit === 'G' ? s.threshold.value : s.threshold.value * noise!;
  let fitNoise: { bn: number; bt?: number } | undefined;
  if (s.noiseCorrection && method !== 'lct' && Number.isFinite(noise)) {
    const bt = method === 'dave4vm' ? Math.hypot(pairNoise(a.bx!, b.bx!), pairNoise(a.by!, b.by!)) / Math.SQRT2 : undefined;
    fitNoise = { bn: noise!, ...(bt !== undefined && Number.isFinite(bt) && { bt }) };
    notes.push(`The affine fit is corrected for the noise in its regressors (${noise!.toPrecision(3)} G${bt !== undefined ? `; horizontal field ${bt.toPrecision(3)} G` : ''}).`);
  }

  const pairMaps = midAndRate(a.bn, b.bn, dtS);
  const { mid } = pairMaps;
  // Field strength at each pixel: |Bn| at mid-time, |B| for dave4vm. Weak pixels get no velocity.
  const strength = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    strength[i] = method === 'dave4vm'
      ? Math.hypot(mid[i], 0.5 * (a.bx![i] + b.bx![i]), 0.5 * (a.by![i] + b.by![i]))
      : Math.abs(mid[i]);
  }
  const strong = new Uint8Array(n);
  for (let i = 0; i < n; i++) strong[i] = strength[i] >= thresholdG ? 1 : 0;
  let vx: Float64Array, vy: Float64Array, vz: Float64Array | undefined;
  if (method === 'lct') {
    const r = localCorrelationTracking(a.bn, b.bn, nx, ny, {
      sigma: s.sigma, stride: s.stride, minSignal: thresholdG, minCorrelation: s.minCorrelation,
    });
    const kx = (dx * KM_PER_MM) / dtS, ky = (dy * KM_PER_MM) / dtS;
    vx = r.sx.map((v) => v * kx);
    vy = r.sy.map((v) => v * ky);
    notes.push(`Local correlation tracking: ${r.windowsValid} of ${r.windows} windows (every ${s.stride} pixels, sigma ${s.sigma} px) gave a shift; shifts above ${r.searchRadius} px are not found.`);
  } else if (method === 'dave') {
    const r = differentialAffineVelocity(a.bn, b.bn, nx, ny, dx, dy, dtS, { sigma: s.sigma, minPivot: s.minPivot, solveAt: strong, midAndRate: pairMaps, workspace, ...(fitNoise && { noise: fitNoise }) });
    vx = r.vx; vy = r.vy;
    notes.push(`Differential affine velocity estimator, sigma ${s.sigma} px: ${r.illConditioned} windows ill-conditioned.`);
  } else {
    const r = vectorAffineVelocity({ bn: [a.bn, b.bn], bx: [a.bx!, b.bx!], by: [a.by!, b.by!] }, nx, ny, dx, dy, dtS,
      { sigma: s.sigma, minPivot: s.minPivot, solveAt: strong, midAndRate: pairMaps, workspace, ...(fitNoise && { noise: fitNoise }) });
    vx = r.vx; vy = r.vy; vz = r.vz;
    notes.push(`Vector-magnetogram affine estimator, sigma ${s.sigma} px: ${r.illConditioned} windows ill-conditioned; vx, vy are the plasma velocity and vz the normal velocity.`);
  }
  if (!vz) notes.push('No normal velocity: vx, vy are the footpoint velocity u.');

  // Weak-field pixels and pixels without data in either frame get no velocity.
  let valid = 0;
  for (let i = 0; i < n; i++) {
    const ok = Number.isFinite(strength[i]) && (method === 'lct' || strong[i] === 1)
      && Number.isFinite(vx[i]) && Number.isFinite(vy[i]) && (vz === undefined || Number.isFinite(vz[i]));
    if (ok) valid++;
    else { vx[i] = NaN; vy[i] = NaN; if (vz) vz[i] = NaN; }
  }
  if (valid === 0) {
    throw new InputError(`${sourceOf(a, 'first frame')} + ${sourceOf(b, 'second frame')}`, 'bn',
      `no pixel gave a velocity (field threshold ${thresholdG.toPrecision(3)} G, method ${method}); refusing to report zero velocity`);
  }

  const round = roundFeatures(mid, nx, ny, Math.max(thresholdG, 1e-300));
  if (round.length > 0) {
    const list = round.slice(0, 5).map((f) =>
      `(${(f.x * dx).toFixed(2)}, ${(f.y * dy).toFixed(2)}) Mm, asymmetry ${(100 * f.asymmetry).toFixed(1)}%`).join('; ');
    notes.push(`This pair shows ${round.length} nearly axisymmetric concentration(s) whose rotation cannot be seen: ${list}.`);
  }
  return {
    vx, vy, ...(vz ? { vz } : {}), method, settings: s, time: (a.time + b.time) / 2, dtS, thresholdG,
    validFraction: valid / n, notes,
  };
}
