// What a region chooses for velocity inference, with the defaults (justified in docs/velocity.md).

import { InputError } from '../inputError.js';

export type VelocityMethod = 'lct' | 'dave' | 'dave4vm';

/** Minimum field: in gauss, or in units of the noise (given, or estimated from the pair). */
export type FieldThreshold =
  | { readonly unit: 'G'; readonly value: number }
  | { readonly unit: 'noise'; readonly value: number; readonly noise?: number };

export interface VelocitySettings {
  /** 'auto' takes dave4vm when both frames carry bx, by, otherwise dave. */
  readonly method: VelocityMethod | 'auto';
  /** Gaussian window width sigma, pixels. */
  readonly sigma: number;
  /** Pixels with a weaker mid-time field (|Bn|; |B| for dave4vm; window rms for lct) get NaN. */
  readonly threshold: FieldThreshold;
  /** Frames further apart than this (s) are refused. */
  readonly maxIntervalS: number;
  /** LCT: windows are correlated every `stride` pixels, bilinear in between. */
  readonly stride: number;
  /** LCT: smallest normalised correlation at the peak that is accepted. */
  readonly minCorrelation: number;
  /** Affine fits: a velocity component is left NaN when 1/[M^-1]_pp of the unit-diagonal normal matrix is below this. */
  readonly minPivot: number;
  /**
   * Affine fits: correct the normal equations for the noise in their regressors (errors in
   * variables), with the noise estimated from the frame pair or given in `threshold.noise`.
   * Off by default: on our rigidly moving scenes with 8 G noise the corrected fit scattered 10-30
   * times more than the plain one (docs/velocity.md); the rate uses the footpoints' own motions.
   */
  readonly noiseCorrection: boolean;
}

export const DEFAULT_VELOCITY_SETTINGS: VelocitySettings = {
  method: 'auto',
  sigma: 4,
  threshold: { unit: 'G', value: 50 },
  maxIntervalS: 1800,
  stride: 4,
  minCorrelation: 0.5,
  minPivot: 1e-6,
  noiseCorrection: false,
};

/** Defaults overlaid with `partial`, checked. Throws InputError naming the setting. */
export function resolveVelocitySettings(partial: Partial<VelocitySettings> = {}, source = 'velocity settings'): VelocitySettings {
  const s: VelocitySettings = { ...DEFAULT_VELOCITY_SETTINGS, ...partial };
  if (!['auto', 'lct', 'dave', 'dave4vm'].includes(s.method)) {
    throw new InputError(source, 'method', `must be auto, lct, dave or dave4vm, got ${JSON.stringify(s.method)}`);
  }
  if (!Number.isFinite(s.sigma) || s.sigma < 1 || s.sigma > 64) {
    throw new InputError(source, 'sigma', `window width must be between 1 and 64 pixels, got ${s.sigma}`);
  }
  const t = s.threshold;
  if (!t || (t.unit !== 'G' && t.unit !== 'noise') || !Number.isFinite(t.value) || t.value < 0) {
    throw new InputError(source, 'threshold', `must be { unit: 'G' | 'noise', value >= 0 }, got ${JSON.stringify(t)}`);
  }
  if (t.unit === 'noise' && t.noise !== undefined && !(Number.isFinite(t.noise) && t.noise > 0)) {
    throw new InputError(source, 'threshold.noise', `must be a positive noise level in G, got ${t.noise}`);
  }
  if (!(s.maxIntervalS > 0)) throw new InputError(source, 'maxIntervalS', `must be a positive number of seconds, got ${s.maxIntervalS}`);
  if (!Number.isInteger(s.stride) || s.stride < 1) throw new InputError(source, 'stride', `must be a positive integer, got ${s.stride}`);
  if (!(s.minCorrelation >= 0 && s.minCorrelation < 1)) throw new InputError(source, 'minCorrelation', `must be in [0, 1), got ${s.minCorrelation}`);
  if (!(s.minPivot > 0 && s.minPivot < 1)) throw new InputError(source, 'minPivot', `must be in (0, 1), got ${s.minPivot}`);
  if (typeof s.noiseCorrection !== 'boolean') throw new InputError(source, 'noiseCorrection', `must be true or false, got ${JSON.stringify(s.noiseCorrection)}`);
  return s;
}
