// The demo region as a pure generator: any frame (and its true injection) is computed on demand
// from the scenario in demoScenario.ts, deterministically (seeded noise), with no I/O, so that it
// runs as well in a worker as in the browser. Nothing is stored.
//
// Frame i: the field bn of every component (elliptical Gaussians), plus Gaussian noise of noiseG
// gauss. The imposed footpoint velocity u at a pixel is the |B|-weighted mean of the motions of
// the components there,  u = Sum_k |B_k| u_k / (Sum_k |B_k| + W0),  with W0 = 10 G so that u fades
// out where no component has field (no velocity is imposed on noise). The truth is the injection
// the core engine computes from that u on the noise-free field, split by the true labels (each
// pixel above 50 G goes to the component with the largest same-sign field there).

import type { Frame } from '../../core/frame.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Grid } from '../../core/grid.js';
import { InputError } from '../../core/inputError.js';
import { measureRate } from '../../core/measureRate.js';
import { CM_PER_MM, KM_PER_MM } from '../../core/units.js';
import type { DemoComponent } from './demoScenario.js';
import { SCENARIO_HOURS, demoComponents } from './demoScenario.js';
import { addGaussianNoise, mixSeed } from './seededNoise.js';

export interface DemoOptions {
  /** Grid side, pixels (nx = ny). Default 128. */
  readonly size?: number;
  /** Pixel side, Mm. Default 92.16 / size (0.72 Mm at 128): the same 92 Mm patch at every size. */
  readonly pixelMm?: number;
  /** Frame interval, s. Default 720 (12 min), or duration / (frames - 1) when only frames is given. */
  readonly cadenceS?: number;
  /** Length of the run, hours. Default 72; the whole story is told over it (faster when shorter). */
  readonly durationH?: number;
  /** Number of frames; with cadenceS given it sets the duration, otherwise the cadence. */
  readonly frames?: number;
  /**
   * Noise of bn, G. Default 5: a few gauss per pixel is common practice for modern full-disc
   * line-of-sight magnetographs at this cadence (from memory).
   */
  readonly noiseG?: number;
  /**
   * Real hours the 72-hour story takes. Default: the length of the run, so that every run tells
   * the whole story. Give 72 with a few frames to see a stretch of it at its own pace.
   */
  readonly storyH?: number;
  /** Story hour of frame 0 (0..72). Default 0. */
  readonly storyStartH?: number;
  /** Noise seed. Default 1. */
  readonly seed?: number;
  /** Frames carry the imposed footpoint velocity vx, vy (km/s). Default false. */
  readonly withVelocity?: boolean;
  /** Frames carry the true footpoint labels. Default false. */
  readonly withLabels?: boolean;
  /** Time of frame 0, UTC ms. Default 2026-03-14T00:00:00Z. */
  readonly startTime?: number;
}

/** The true injection at one frame, Mx^2/s (spin + orbit + background = total). */
export interface DemoTruth {
  readonly time: number;
  readonly total: number;
  readonly spin: number;
  readonly orbit: number;
  readonly background: number;
}

export interface DemoRegion {
  readonly frameCount: number;
  readonly cadenceS: number;
  readonly startTime: number;
  readonly grid: Grid;
  readonly noiseG: number;
  /** Real seconds per story hour (the story is 72 hours long). */
  readonly secondsPerStoryHour: number;
  readonly seed: number;
  /** Time of frame i, UTC ms. */
  timeAt(i: number): number;
  /** Frame i as an instrument would deliver it (noise; velocity and labels when asked for). */
  frameAt(i: number): Frame;
  /** Frame i without noise, with the imposed velocity and the true labels. */
  cleanFrameAt(i: number): Frame;
  /** The true injection of frame i, from the imposed motion on the noise-free field. */
  truthAt(i: number): DemoTruth;
  /** The scenario's components at frame i (positions relative to the patch centre, Mm). */
  componentsAt(i: number): DemoComponent[];
}

export const DEMO_DEFAULTS = {
  size: 128,
  patchMm: 92.16,
  cadenceS: 720,
  durationH: SCENARIO_HOURS,
  noiseG: 5,
  seed: 1,
  startTime: Date.UTC(2026, 2, 14, 0, 0, 0),
} as const;

/** Velocity weight floor, G: below it the imposed velocity fades out. */
const WEIGHT_FLOOR_G = 10;
/** Field above which a pixel is labelled with its dominant component, G. */
const LABEL_THRESHOLD_G = 50;
/** Components are drawn out to this many widths (exp(-18) of the peak beyond: under 1e-4 G). */
const REACH_SIGMAS = 6;

interface Rendered {
  readonly bn: Float64Array;
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  readonly labels: Int32Array;
}

function positiveInteger(v: number, field: string): number {
  if (!Number.isInteger(v) || v < 1) throw new InputError('demo region', field, `must be a positive integer, got ${v}`);
  return v;
}

function positive(v: number, field: string): number {
  if (!Number.isFinite(v) || v <= 0) throw new InputError('demo region', field, `must be positive and finite, got ${v}`);
  return v;
}

export function demoRegion(options: DemoOptions = {}): DemoRegion {
  const size = positiveInteger(options.size ?? DEMO_DEFAULTS.size, 'size');
  const pixelMm = positive(options.pixelMm ?? DEMO_DEFAULTS.patchMm / size, 'pixelMm');
  let cadenceS: number, frameCount: number;
  if (options.frames !== undefined) {
    frameCount = positiveInteger(options.frames, 'frames');
    if (options.cadenceS !== undefined) cadenceS = positive(options.cadenceS, 'cadenceS');
    else cadenceS = frameCount > 1 ? (positive(options.durationH ?? DEMO_DEFAULTS.durationH, 'durationH') * 3600) / (frameCount - 1) : DEMO_DEFAULTS.cadenceS;
  } else {
    cadenceS = positive(options.cadenceS ?? DEMO_DEFAULTS.cadenceS, 'cadenceS');
    const durationS = positive(options.durationH ?? DEMO_DEFAULTS.durationH, 'durationH') * 3600;
    frameCount = Math.floor(durationS / cadenceS + 1e-9) + 1;
  }
  const durationS = Math.max((frameCount - 1) * cadenceS, cadenceS);
  const noiseG = options.noiseG ?? DEMO_DEFAULTS.noiseG;
  if (!Number.isFinite(noiseG) || noiseG < 0) throw new InputError('demo region', 'noiseG', `must be zero or positive, got ${noiseG}`);
  const seed = options.seed ?? DEMO_DEFAULTS.seed;
  const startTime = options.startTime ?? DEMO_DEFAULTS.startTime;
  const grid: Grid = { nx: size, ny: size, dx: pixelMm, dy: pixelMm };
  // Scenario hours per real second, and km/s per (Mm per scenario hour).
  const storyS = positive(options.storyH ?? durationS / 3600, 'storyH') * 3600;
  const storyStartH = options.storyStartH ?? 0;
  if (!Number.isFinite(storyStartH)) throw new InputError('demo region', 'storyStartH', `must be finite, got ${storyStartH}`);
  const scenarioHoursPerS = SCENARIO_HOURS / storyS;
  const kmsPerMmPerHour = KM_PER_MM * scenarioHoursPerS;
  const cache: FluxKernelCache = new Map();
  const truths = new Map<number, DemoTruth>();

  const check = (i: number) => {
    if (!Number.isInteger(i) || i < 0 || i >= frameCount) {
      throw new InputError('demo region', 'frame', `index ${i} is outside 0..${frameCount - 1}`);
    }
  };
  const timeAt = (i: number) => startTime + Math.round(i * cadenceS * 1000);
  const componentsAt = (i: number) => { check(i); return demoComponents(storyStartH + i * cadenceS * scenarioHoursPerS); };

  function render(i: number): Rendered {
    const { nx, ny, dx, dy } = grid;
    const n = nx * ny;
    const bn = new Float64Array(n);
    const weight = new Float64Array(n);
    const wux = new Float64Array(n);
    const wuy = new Float64Array(n);
    // Strongest component of each sign at each pixel, for the true labels.
    const bestPos = new Float64Array(n), bestNeg = new Float64Array(n);
    const ownerPos = new Int32Array(n), ownerNeg = new Int32Array(n);
    const x0 = -((nx - 1) / 2) * dx, y0 = -((ny - 1) / 2) * dy;
    for (const c of componentsAt(i)) {
      const peak = c.flux / (2 * Math.PI * c.sigmaMajor * c.sigmaMinor * CM_PER_MM * CM_PER_MM);
      const cos = Math.cos(c.angle), sin = Math.sin(c.angle);
      const ia = 1 / (c.sigmaMajor * c.sigmaMajor), ib = 1 / (c.sigmaMinor * c.sigmaMinor);
      const reach = REACH_SIGMAS * c.sigmaMajor;
      const ix0 = Math.max(0, Math.floor((c.cx - reach - x0) / dx)), ix1 = Math.min(nx - 1, Math.ceil((c.cx + reach - x0) / dx));
      const iy0 = Math.max(0, Math.floor((c.cy - reach - y0) / dy)), iy1 = Math.min(ny - 1, Math.ceil((c.cy + reach - y0) / dy));
      const sign = Math.sign(c.flux);
      for (let iy = iy0; iy <= iy1; iy++) {
        const Y = y0 + iy * dy - c.cy;
        for (let ix = ix0; ix <= ix1; ix++) {
          const X = x0 + ix * dx - c.cx;
          const a = X * cos + Y * sin, b = -X * sin + Y * cos;
          const q = a * a * ia + b * b * ib;
          if (q > 2 * REACH_SIGMAS * REACH_SIGMAS) continue;
          const v = peak * Math.exp(-0.5 * q);
          const k = iy * nx + ix;
          bn[k] += v;
          const w = Math.abs(v);
          weight[k] += w;
          // Rigid motion of the component: translation plus rotation about its centre.
          wux[k] += w * (c.vx - c.omega * Y);
          wuy[k] += w * (c.vy + c.omega * X);
          if (sign > 0) { if (w > bestPos[k]) { bestPos[k] = w; ownerPos[k] = c.label; } }
          else if (w > bestNeg[k]) { bestNeg[k] = w; ownerNeg[k] = c.label; }
        }
      }
    }
    const vx = new Float64Array(n), vy = new Float64Array(n);
    const labels = new Int32Array(n);
    for (let k = 0; k < n; k++) {
      const d = weight[k] + WEIGHT_FLOOR_G;
      vx[k] = (wux[k] / d) * kmsPerMmPerHour;
      vy[k] = (wuy[k] / d) * kmsPerMmPerHour;
      if (Math.abs(bn[k]) >= LABEL_THRESHOLD_G) labels[k] = bn[k] > 0 ? ownerPos[k] : ownerNeg[k];
    }
    return { bn, vx, vy, labels };
  }

  const provenance = (i: number) => ({
    source: `demo region frame ${i}`,
    keywords: { ORIGIN: 'helicord demo region', FRAME: i, SEED: seed, NOISE_G: noiseG },
  });

  function cleanFrameAt(i: number): Frame {
    check(i);
    const r = render(i);
    return { time: timeAt(i), ...grid, bn: r.bn, vx: r.vx, vy: r.vy, labels: r.labels, provenance: provenance(i) };
  }

  function frameAt(i: number): Frame {
    check(i);
    const r = render(i);
    addGaussianNoise(r.bn, noiseG, mixSeed(seed, i));
    return {
      time: timeAt(i), ...grid, bn: r.bn,
      ...(options.withVelocity && { vx: r.vx, vy: r.vy }),
      ...(options.withLabels && { labels: r.labels }),
      provenance: provenance(i),
    };
  }

  function truthAt(i: number): DemoTruth {
    check(i);
    let t = truths.get(i);
    if (!t) {
      const { sample } = measureRate({ frame: cleanFrameAt(i), noiseG: 0, cache });
      t = { time: sample.time, total: sample.total, spin: sample.spin, orbit: sample.orbit, background: sample.background };
      truths.set(i, t);
    }
    return t;
  }

  return { frameCount, cadenceS, startTime, grid, noiseG, secondsPerStoryHour: 1 / scenarioHoursPerS, seed, timeAt, frameAt, cleanFrameAt, truthAt, componentsAt };
}
