// The parts of one frame's analysis that may run in another thread while the rest goes on: each
// is a pure function of plain, cloneable values (frames, typed arrays, settings) and of a cache
// (flux kernels, the affine fit's workspace) that belongs to whoever runs it. core/frameSteps.ts forks and joins them by name, so a
// driver can send the name and the arguments elsewhere (the monitor's second thread) and get the
// same result as from running it here.
//
//   runFrameTask('inferVelocity', [previous, frame, settings.velocity], cache)
//   runFrameTask('splitPart', [grid, t, labels, {}, { part: 0, of: 2 }], cache)

import type { FluxKernel, FluxKernelCache } from './fluxKernel.js';
import { fluxKernelFor, kernelKey } from './fluxKernel.js';
import type { Frame } from './frame.js';
import type { FluxTransport } from './fluxTransport.js';
import type { Grid } from './grid.js';
import type { LabelSplitOptions, SplitPart, SplitShare } from './labelSplit.js';
import { splitPart } from './labelSplit.js';
import type { SplitCache } from './labelSplit.js';
import type { InferredVelocity } from './velocity/inferVelocity.js';
import { inferVelocity } from './velocity/inferVelocity.js';
import type { VelocitySettings } from './velocity/velocitySettings.js';
import type { AffineFitWorkspace } from './velocity/fitWindowPasses.js';
import { createAffineFitWorkspace } from './velocity/fitWindowPasses.js';

/**
 * What a thread keeps from one frame's tasks to the next: the flux kernels by grid (the Map), the
 * label split's pair grids (made at its first box row) and the affine fit's workspace, made at the
 * first inference (its memory is worth keeping: fresh memory costs more to touch than the fit's
 * kernels save, docs/speed.md). The pair grids and the fit run in the stretch of the frame grid's
 * kernel once it exists (core/wasmBinary.ts SharedStretch): one scratch memory per thread. Owned
 * by whoever runs the tasks; a plain FluxKernelCache is one that has not kept a workspace yet.
 */
export type FrameCache = SplitCache & { affineFit?: AffineFitWorkspace };

/** Options of the split that can travel (the kernel cache stays with the thread that runs it). */
export type SplitTaskOptions = Omit<LabelSplitOptions, 'cache'>;

export interface FrameTasks {
  /** The velocity between two frames (core/velocity/inferVelocity.ts). */
  inferVelocity(
    args: readonly [previous: Frame, frame: Frame, settings: Partial<VelocitySettings> | undefined, pairNoiseG?: number], cache?: FrameCache,
  ): InferredVelocity;
  /** One part of the label split of a flux transport on a grid (core/labelSplit.ts splitPart). */
  splitPart(args: readonly [grid: Grid, t: FluxTransport, labels: Int32Array, options: SplitTaskOptions, share: SplitShare], cache?: FrameCache): SplitPart;
}

export type FrameTaskName = keyof FrameTasks;
export type FrameTaskArgs<K extends FrameTaskName> = Parameters<FrameTasks[K]>[0];
export type FrameTaskResult<K extends FrameTaskName> = ReturnType<FrameTasks[K]>;

export const FRAME_TASKS: FrameTasks = {
  inferVelocity: ([previous, frame, settings, pairNoiseG], cache) =>
    inferVelocity(previous, frame, settings, cache && affineFitWorkspace(cache, frame), pairNoiseG),
  splitPart: ([grid, t, labels, options, share], cache) =>
    splitPart(frameKernel(grid, cache), t, labels, { ...options, ...(cache && { cache }) }, share),
};

/**
 * The flux kernel of `grid` from the thread's cache; one made now gets a stretch large enough for
 * the affine fit's workspace too (what the thread's fit took last), so that the fit runs there
 * from its next frame on.
 */
export function frameKernel(grid: Grid, cache?: FrameCache): FluxKernel {
  return fluxKernelFor(grid, cache, { scratchBytes: cache?.affineFit?.arena?.bytes });
}

/** The thread's affine-fit workspace, offered the stretch of the kernel it already has for `grid` (none is made for it). */
function affineFitWorkspace(cache: FrameCache, grid: Grid): AffineFitWorkspace {
  const workspace = cache.affineFit ??= createAffineFitWorkspace();
  workspace.shared = cache.get(kernelKey(grid))?.stretch;
  return workspace;
}

export function isFrameTaskName(name: unknown): name is FrameTaskName {
  return typeof name === 'string' && Object.prototype.hasOwnProperty.call(FRAME_TASKS, name);
}

/** Runs one task here. */
export function runFrameTask<K extends FrameTaskName>(task: K, args: FrameTaskArgs<K>, cache?: FrameCache): FrameTaskResult<K> {
  return (FRAME_TASKS[task] as (a: FrameTaskArgs<K>, c?: FrameCache) => FrameTaskResult<K>)(args, cache);
}
