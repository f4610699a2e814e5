// Runs a scene's frames through the pipeline's per-frame step, core `analyseFrame`, exactly as the
// monitor does: one frame after another, the analysis state of each frame handed to the next,
// the frames WITHOUT velocity maps so that the velocity is inferred between consecutive frames.
// The settings are the defaults (method 'auto') or the defaults with one velocity method forced.
// A frame the step refuses (InputError) is recorded and the state is dropped, as the monitor's
// compute worker does.
//
// What is read from each sample is read generically: every number (or null) the sample carries,
// so that new fields (uncertainties of spin, orbit, ...) are picked up without changing this file.

import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import type { AnalysisSettings, AnalysisState } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { mixSeed } from '../../replay/demo/seededNoise.js';
import { seededNormal } from '../support/random.js';
import type { Scene } from './scenes.js';
import type { SceneMaps, Truth } from './truth.js';
import { sceneMaps, truthAt } from './truth.js';

export type Mode = 'los' | 'vector';
export type Method = 'auto' | 'dave' | 'lct' | 'dave4vm';

/** Start of every sequence (the scene's own time 0 is its middle frame). */
export const SEQUENCE_START = Date.UTC(2026, 4, 10, 12, 0, 0);

export interface Sequence {
  readonly scene: Scene;
  readonly cadenceS: number;
  /** Scene times of the frames, s. */
  readonly times: readonly number[];
  readonly clean: readonly SceneMaps[];
  /** Truth at the mid-time of the pair (k-1, k), index k - 1. */
  readonly truths: readonly Truth[];
}

/** Noise-free frames and the truth of every pair, for `frames` frames at `cadenceS`. */
export function prepareSequence(scene: Scene, cadenceS: number, frames: number, cache: FluxKernelCache): Sequence {
  if (!(Number.isInteger(frames) && frames >= 2)) throw new RangeError('a sequence needs at least two frames');
  const times = Array.from({ length: frames }, (_, k) => (k - (frames - 1) / 2) * cadenceS);
  const clean = times.map((t) => sceneMaps(scene, t));
  const truths = times.slice(1).map((t, k) => truthAt(scene, (times[k] + t) / 2, cache));
  return { scene, cadenceS, times, clean, truths };
}

export interface SampleRecord {
  /** The sample made when frame `pair` arrived (frames pair-1 and pair). */
  readonly pair: number;
  /** Scene time of the sample, s. */
  readonly t: number;
  /** Every number (or null) the sample carries, by field name. */
  readonly values: Readonly<Record<string, number | null>>;
  readonly velocityMethod: string;
  readonly flags: readonly string[];
  /** Footpoint rows (primitive fields only), kept for noise-free runs. */
  readonly footpoints?: readonly Record<string, number | string | boolean | null>[];
}

export interface RunRecord {
  readonly scene: string;
  readonly mode: Mode;
  readonly cadenceS: number;
  readonly noiseG: number;
  readonly method: Method;
  readonly realisation: number;
  readonly samples: SampleRecord[];
  /** Messages of frames the step refused, with the frame index. */
  readonly errors: string[];
  /** CPU time of the run, ms. */
  readonly cpuMs: number;
}

function stringHash(s: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 0x01000193) >>> 0;
  return h;
}

/** The seed of one realisation's noise: the same for every method and noise level (common random numbers). */
export function noiseSeed(scene: string, cadenceS: number, realisation: number): number {
  return mixSeed(stringHash(`${scene}|${cadenceS}`), realisation);
}

/** The frames of one realisation: the clean maps plus Gaussian noise of `noiseG` (bn, and bx, by in vector mode). */
export function noisyFrames(seq: Sequence, mode: Mode, noiseG: number, realisation: number): Frame[] {
  const { nx, ny, dx, dy } = seq.scene.grid;
  const n = nx * ny;
  const base = noiseSeed(seq.scene.name, seq.cadenceS, realisation);
  return seq.clean.map((m, k) => {
    const normal = seededNormal(mixSeed(base, k));
    const noisy = (map: Float64Array) => {
      const out = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const g = normal();
        out[i] = map[i] + (noiseG > 0 ? noiseG * g : 0);
      }
      return out;
    };
    const bn = noisy(m.bn);
    const vector = mode === 'vector' && m.bx && m.by ? { bx: noisy(m.bx), by: noisy(m.by) } : {};
    return {
      time: SEQUENCE_START + m.t * 1000, nx, ny, dx, dy, bn, ...vector,
      provenance: { source: `${seq.scene.name} frame ${k}` },
    };
  });
}

export function settingsFor(method: Method, extra: AnalysisSettings = {}): AnalysisSettings {
  return method === 'auto' ? { ...extra } : { ...extra, velocity: { ...extra.velocity, method } };
}

function primitives(o: object, prefix = ''): Record<string, number | null> {
  const out: Record<string, number | null> = {};
  for (const [k, v] of Object.entries(o)) {
    if (typeof v === 'number' || v === null) out[prefix + k] = v;
    else if (v && typeof v === 'object' && !Array.isArray(v) && /^sigma/i.test(k)) {
      // An uncertainty given as an object { total, spin, ... } reads as sigmaTotal, sigmaSpin, ...
      for (const [k2, v2] of Object.entries(v as object)) {
        if (typeof v2 === 'number' || v2 === null) out[`sigma${k2[0].toUpperCase()}${k2.slice(1)}`] = v2;
      }
    }
  }
  return out;
}

function footpointRows(rows: readonly object[]): Record<string, number | string | boolean | null>[] {
  return rows.map((r) => {
    const out: Record<string, number | string | boolean | null> = {};
    for (const [k, v] of Object.entries(r)) {
      if (v === null || ['number', 'string', 'boolean'].includes(typeof v)) out[k] = v as number | string | boolean | null;
    }
    return out;
  });
}

/** One realisation of one scene through analyseFrame with one method. */
export function runSequence(
  seq: Sequence, mode: Mode, noiseG: number, method: Method, realisation: number, cache: FluxKernelCache,
  options: { keepFootpoints?: boolean; settings?: AnalysisSettings } = {},
): RunRecord {
  const frames = noisyFrames(seq, mode, noiseG, realisation);
  const settings = settingsFor(method, options.settings);
  const c0 = process.cpuUsage();
  let state: AnalysisState = {};
  const samples: SampleRecord[] = [];
  const errors: string[] = [];
  frames.forEach((frame, k) => {
    try {
      const r = analyseFrame(frame, state, settings, cache);
      state = r.state;
      if (r.sample) {
        samples.push({
          pair: k, t: (r.sample.time - SEQUENCE_START) / 1000,
          values: primitives(r.sample), velocityMethod: r.sample.velocityMethod, flags: [...r.sample.flags],
          ...(options.keepFootpoints && r.footpoints && { footpoints: footpointRows(r.footpoints.footpoints) }),
        });
      }
    } catch (e) {
      errors.push(`frame ${k}: ${e instanceof Error ? e.message : String(e)}`);
      state = {};
    }
  });
  const c = process.cpuUsage(c0);
  return {
    scene: seq.scene.name, mode, cadenceS: seq.cadenceS, noiseG, method, realisation, samples, errors,
    cpuMs: (c.user + c.system) / 1000,
  };
}
