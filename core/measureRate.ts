// One rate measurement from one frame with its velocity: the composition of the engine's steps
// (flux transport, G_theta and G_A, the label split, emergence and shear with vector data, the
// noise uncertainty). Pure: everything it needs comes in, the kernel cache is the caller's.
// The label split is forked (core/frameSteps.ts): it may run in another thread while the rate,
// A_p and the noise uncertainty are computed here.
//
//   const { sample, split, gTheta } = measureRate({ frame, labels, noiseG: 8 });

import type { FrameCache } from './frameTasks.js';
import { frameKernel } from './frameTasks.js';
import type { Frame } from './frame.js';
import { hasVectorData } from './frame.js';
import type { VelocityMaps } from './fluxTransport.js';
import type { PatchCentre } from './frameAssembly/wcs.js';
import { fluxTransport } from './fluxTransport.js';
import { convolveTransport, helicityFluxFromConvolutions } from './helicityFlux.js';
import type { LabelSplit, SplitPart } from './labelSplit.js';
import { joinSplitParts } from './labelSplit.js';
import type { FrameSteps } from './frameSteps.js';
import { fork, join, runSteps, threads } from './frameSteps.js';
import { emergenceShear, emergenceTerm } from './emergenceShear.js';
import { estimateNoiseLevel } from './noiseLevel.js';
import { rateSigmaFromNoise } from './rateUncertainty.js';
import type { MotionCovariance } from './motionUncertainty.js';
import { rateSigmaFromMotions } from './motionUncertainty.js';
import type { RateSample } from './rateSample.js';
import { UNSIGNED_FLUX_FLOOR_NOISE, unsignedFlux } from './rateSample.js';

export interface RateInput {
  readonly frame: Frame;
  /** Velocity when not carried by the frame (inferred between frames). */
  readonly velocity?: VelocityMaps;
  readonly velocityMethod?: string;
  /** Footpoint labels; the frame's own labels when undefined; null for none. */
  readonly labels?: Int32Array | null;
  /** Sample time and interval when the velocity spans a frame pair. */
  readonly time?: number;
  readonly dtS?: number;
  /** Noise of bn in G; estimated from the frame when not given. */
  readonly noiseG?: number;
  /** The thread's kernels and workspaces, kept from frame to frame (core/frameTasks.ts). */
  readonly cache?: FrameCache;
  /** Errors of the footpoint motions the velocity was built from (for the uncertainty). */
  readonly motions?: ReadonlyMap<number, MotionCovariance>;
  /** The frames those motions were measured between, UTC ms. */
  readonly motionFrom?: number;
  readonly motionTo?: number;
  /**
   * Normal plasma velocity (km/s) when `velocity` is the footpoint velocity u of vector data: the
   * emergence term comes from it and the horizontal field, the shear term is the rest of the total.
   */
  readonly normalVelocity?: Float64Array;
  /** The patch centre of the sample (core/frameAssembly/wcs.ts), passed through. */
  readonly centre?: PatchCentre;
  /** Quality flags to add (e.g. from the velocity model). */
  readonly flags?: readonly string[];
}

export interface RateMeasurement {
  readonly sample: RateSample;
  readonly split?: LabelSplit;
  /** G_theta density, Mx^2 cm^-2 s^-1, NaN where no data. */
  readonly gTheta: Float64Array;
  /** The flux transport the rate was computed from (for the footpoints' motions). */
  readonly transport: ReturnType<typeof fluxTransport>;
}

export function measureRate(input: RateInput): RateMeasurement {
  return runSteps(measureRateSteps(input), input.cache);
}

/** measureRate as steps: the label split is forked before the rate and joined after it. */
export function* measureRateSteps(input: RateInput): FrameSteps<RateMeasurement> {
  const { frame } = input;
  const t = fluxTransport(frame, input.velocity);
  const labels = input.labels === undefined ? frame.labels : input.labels ?? undefined;
  // The split is started before the total is known, in as many parts as the driver has threads
  // (core/labelSplit.ts joinSplitParts: the same split however many).
  const grid = { nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy };
  const of = labels ? yield* threads() : 0;
  const splitTasks = [];
  // The last part is joined first, so the thread that joins does it after the rate's own
  // convolution (one full-grid convolution more than the others: otherWork).
  const otherWork = Array.from({ length: of }, (_, p) => (p === of - 1 && of > 1 ? 1 : 0));
  for (let part = 0; part < of; part++) splitTasks.push(yield* fork('splitPart', [grid, t, labels!, {}, { part, of, otherWork }]));
  const kernel = frameKernel(frame, input.cache);
  const conv = convolveTransport(kernel, t);
  const flux = helicityFluxFromConvolutions(kernel, t, conv);
  const flags: string[] = [...(input.flags ?? [])];
  if (flux.maskedFraction > 0) flags.push('masked-pixels');
  const vector = input.velocity ? (input.velocity.vz !== undefined && frame.bx !== undefined) : hasVectorData(frame);
  let es: { emergence: number; shear: number } | undefined;
  if (vector) {
    es = emergenceShear({ ...frame, vx: input.velocity?.vx ?? frame.vx, vy: input.velocity?.vy ?? frame.vy, vz: input.velocity?.vz ?? frame.vz }, flux.apx, flux.apy);
  } else if (input.normalVelocity && frame.bx && frame.by) {
    const emergence = emergenceTerm(flux.apx, flux.apy, frame.bx, frame.by, input.normalVelocity, frame.dx, frame.dy);
    es = { emergence, shear: flux.total - emergence };
  }
  const noiseG = input.noiseG ?? estimateNoiseLevel(frame.bn).sigma;
  // The uncertainty needs u itself; where the flux transport is Bn u with u given, use it.
  const ux = input.velocity?.vx ?? frame.vx!;
  const uy = input.velocity?.vy ?? frame.vy!;
  const sigmaNoise = rateSigmaFromNoise(conv, ux, uy, t.valid, Number.isFinite(noiseG) ? noiseG : 0, frame.dx, frame.dy);
  let split: LabelSplit | undefined;
  if (of > 0) {
    // The last parts first: one the second thread has not started is done here meanwhile.
    const parts = new Array<SplitPart>(of);
    for (let part = of - 1; part >= 0; part--) parts[part] = yield* join(splitTasks[part]);
    const s = joinSplitParts(parts, flux.total);
    split = s.ids.length === 0 ? undefined : s;
  }
  if (!split) flags.push('no-footpoints');
  const motion = input.motions && labels
    ? rateSigmaFromMotions(t, conv, labels, input.motions, frame, kernel, split?.labelledField)
    : { total: 0, spin: 0, orbit: 0 };
  const sample: RateSample = {
    time: input.time ?? frame.time,
    dtS: input.dtS ?? 0,
    total: flux.total,
    totalGa: flux.totalGa,
    spin: split?.spinTotal ?? 0,
    orbit: split?.orbitTotal ?? 0,
    background: split?.background ?? flux.total,
    ...(es && { emergence: es.emergence, shear: es.shear }),
    sigmaTotal: Math.hypot(sigmaNoise, motion.total),
    sigmaSpin: motion.spin,
    sigmaOrbit: motion.orbit,
    sigmaMotion: motion.total,
    ...(input.motions && input.motionFrom !== undefined && input.motionTo !== undefined && { motionFrom: input.motionFrom, motionTo: input.motionTo }),
    noiseG,
    unsignedFlux: unsignedFlux(frame.bn, frame.dx, frame.dy, Number.isFinite(noiseG) && noiseG > 0 ? UNSIGNED_FLUX_FLOOR_NOISE * noiseG : 0),
    velocityMethod: input.velocityMethod ?? 'given',
    splitMethod: split ? 'labels' : 'none',
    maskedFraction: flux.maskedFraction,
    flags,
    ...(input.centre && { centre: input.centre }),
  };
  return { sample, ...(split && { split }), gTheta: flux.gTheta, transport: t };
}
