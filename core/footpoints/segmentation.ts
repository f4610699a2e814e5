// Segmentation of a bn map into footpoints of both polarities: noise level (given, or estimated
// from the map), optional smoothing, a threshold in units of the noise, downhill-gradient
// tessellation with saddle merging (or plain connected patches), minimum area and flux.
// Every pixel gets a label, 0 = background; NaN pixels are always background.

import type { Grid } from '../grid.js';
import { pixelFluxMx } from '../units.js';
import { estimateNoiseLevel } from '../noiseLevel.js';
import { smoothMap } from './smoothing.js';
import { connectedComponents } from './connectedComponents.js';
import { downhillTessellation } from './tessellation.js';

export interface SegmentationSettings {
  /** Noise level of bn, G. Estimated from the map (MAD of weak-field pixels) when absent. */
  readonly noise?: number;
  /** Threshold on |smoothed bn| in units of the noise (default 5: a 5-sigma noise spike is rare, about 6e-7 per pixel). */
  readonly threshold?: number;
  /** Gaussian smoothing before thresholding, pixels (default 1: removes single-pixel noise peaks, keeps footpoints of a few pixels). 0 = none. */
  readonly smoothing?: number;
  /** Neighbouring regions merge when their saddle is less than this many noise units below the lower peak (default 3). */
  readonly saddleDepth?: number;
  /**
   * Neighbouring regions also merge when their saddle stands at least this share of the lower peak
   * (default 0.5): cores that overlap above half their height are one body, as umbral cores inside
   * one penumbra are; two equal Gaussian spots split only when more than 3.3 widths apart. 0 = off.
   */
  readonly saddleRatio?: number;
  /** Smallest footpoint, pixels (default 4: a 2x2 patch is the smallest resolved concentration). */
  readonly minPixels?: number;
  /** Smallest |flux| of a footpoint, Mx (default 0: no flux limit). */
  readonly minFlux?: number;
  /**
   * Split touching concentrations by the downhill tessellation (default true). false: every
   * 8-connected patch of one polarity above threshold is one footpoint.
   */
  readonly split?: boolean;
}

export const SEGMENTATION_DEFAULTS = {
  threshold: 5,
  smoothing: 1,
  saddleDepth: 3,
  saddleRatio: 0.5,
  minPixels: 4,
  minFlux: 0,
  split: true,
} as const;

/** When the map has no measurable noise (exact zeros, e.g. a synthetic map), use this share of max |bn|. */
export const NOISE_FLOOR_OF_PEAK = 1e-3;

export interface Segmentation {
  /** Labels 1..count in raster order of first pixel, 0 = background. */
  readonly labels: Int32Array;
  readonly count: number;
  /** Noise level used, G, and where it came from. */
  readonly noise: number;
  readonly noiseSource: 'given' | 'estimated' | 'floor';
  /**
   * The noise level estimated from bn (core/noiseLevel.ts estimateNoiseLevel), G, when no noise was
   * given: before the floor replaces a zero, so that others needing the same estimate of the same
   * map can take it from here.
   */
  readonly estimatedNoise?: number;
  /** Threshold applied to |field|, G. */
  readonly thresholdG: number;
  /** The map that was thresholded (bn smoothed, NaN kept), G. */
  readonly field: Float64Array;
  /** Share of pixels without data. */
  readonly maskedFraction: number;
}

/**
 * `smoothed`: bn already smoothed with settings.smoothing, when the caller has it (the frame
 * analysis makes a pair's mid-time field from its two frames' smoothed fields).
 */
export function segmentFootpoints(bn: ArrayLike<number>, grid: Grid, settings: SegmentationSettings = {}, smoothed?: Float64Array): Segmentation {
  const { nx, ny, dx, dy } = grid;
  const n = nx * ny;
  const s = { ...SEGMENTATION_DEFAULTS, ...stripUndefined(settings) };
  let noise: number;
  let noiseSource: Segmentation['noiseSource'];
  let estimatedNoise: number | undefined;
  if (settings.noise !== undefined) {
    if (!(settings.noise >= 0)) throw new RangeError(`noise must be >= 0 G, got ${settings.noise}`);
    noise = settings.noise;
    noiseSource = 'given';
  } else {
    noise = estimateNoiseLevel(bn).sigma;
    estimatedNoise = noise;
    noiseSource = 'estimated';
  }
  if (noise === 0) {
    noise = NOISE_FLOOR_OF_PEAK * peakAbs(bn, n);
    noiseSource = 'floor';
  }
  if (smoothed && smoothed.length !== n) throw new RangeError(`smoothed field has ${smoothed.length} values, expected ${n}`);
  const field = smoothed ?? smoothMap(bn, nx, ny, s.smoothing);
  const thresholdG = s.threshold * noise;
  const strength = new Float64Array(n);
  const classes = new Int8Array(n);
  const missing = classify(field, thresholdG, strength, classes);
  const fluxPerUnit = pixelFluxMx(1, dx, dy);
  if (!s.split) {
    const { labels, count } = patchesAboveThreshold(classes, bn, nx, ny, s.minPixels, s.minFlux / fluxPerUnit);
    return { labels, count, noise, noiseSource, ...(estimatedNoise !== undefined && { estimatedNoise }), thresholdG, field, maskedFraction: missing / n };
  }
  const { labels, count } = downhillTessellation(strength, classes, nx, ny, {
    dx, dy,
    saddleDepth: s.saddleDepth * noise,
    saddleRatio: s.saddleRatio,
    minPixels: s.minPixels,
    minFieldSum: s.minFlux / fluxPerUnit,
    fluxMap: bn,
  });
  return { labels, count, noise, noiseSource, ...(estimatedNoise !== undefined && { estimatedNoise }), thresholdG, field, maskedFraction: missing / n };
}

// The pixel loops below are functions of their own: segmentFootpoints runs once per frame, and V8
// optimised it inside its loops and threw that code away at the objects made after them, every frame.

/** Largest |bn| of the first n pixels (NaN skipped). */
function peakAbs(bn: ArrayLike<number>, n: number): number {
  let peak = 0;
  for (let i = 0; i < n; i++) { const v = Math.abs(bn[i]); if (v > peak) peak = v; }
  return peak;
}

/** |field| into strength and its sign above the threshold into classes; returns the pixels without data. */
function classify(field: Float64Array, thresholdG: number, strength: Float64Array, classes: Int8Array): number {
  let missing = 0;
  for (let i = 0; i < field.length; i++) {
    const f = field[i];
    if (!Number.isFinite(f)) { missing++; continue; }
    const a = Math.abs(f);
    strength[i] = a;
    // A zero map with a zero threshold has no footpoint: strictly above the threshold only.
    if (a > thresholdG && a > 0) classes[i] = f > 0 ? 1 : -1;
  }
  return missing;
}

/** Connected patches of one polarity, small ones dropped, renumbered 1..count in raster order. */
function patchesAboveThreshold(classes: Int8Array, bn: ArrayLike<number>, nx: number, ny: number, minPixels: number, minFieldSum: number) {
  const c = connectedComponents(classes, nx, ny, 8);
  const pixels = new Float64Array(c.count + 1), sum = new Float64Array(c.count + 1);
  for (let i = 0; i < c.labels.length; i++) {
    const l = c.labels[i];
    if (l === 0) continue;
    pixels[l]++;
    if (Number.isFinite(bn[i])) sum[l] += Math.abs(bn[i]);
  }
  const renumber = new Int32Array(c.count + 1);
  let count = 0;
  for (let l = 1; l <= c.count; l++) if (pixels[l] >= minPixels && sum[l] >= minFieldSum) renumber[l] = ++count;
  const labels = new Int32Array(c.labels.length);
  for (let i = 0; i < labels.length; i++) labels[i] = renumber[c.labels[i]];
  return { labels, count };
}

function stripUndefined<T extends object>(o: T): Partial<T> {
  const out: Partial<T> = {};
  for (const [k, v] of Object.entries(o)) if (v !== undefined) (out as Record<string, unknown>)[k] = v;
  return out;
}
