// The analysis as steps (core/frameSteps.ts): forks may run whenever a driver likes between the
// fork and the join, so a driver that runs each fork only at its join (the latest moment), and
// says it has two threads (the split cut in two parts), must give the same frame results as
// runSteps (each fork at once, the split whole). If a forked task read anything the
// analysis changes between its fork and its join, the two would differ.
import { describe, expect, it } from 'vitest';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { AnalysisState, FrameAnalysis } from '../../core/frameAnalysis.js';
import { analyseFrame, analyseFrameSteps } from '../../core/frameAnalysis.js';
import type { FrameSteps, TaskHandle } from '../../core/frameSteps.js';
import { fork, join, runSteps } from '../../core/frameSteps.js';
import { runFrameTask } from '../../core/frameTasks.js';
import { InputError } from '../../core/inputError.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';

/** Each fork run at its join, in this thread. */
function runAtJoin<R>(steps: FrameSteps<R>, cache: FluxKernelCache, order: string[]): R {
  const forks = new Map<number, { task: Parameters<typeof runFrameTask>[0]; args: Parameters<typeof runFrameTask>[1] }>();
  let id = 0;
  let next = steps.next();
  while (!next.done) {
    const step = next.value;
    if (step.kind === 'threads') {
      next = steps.next(2); // the split in two parts: joined, the same as one
    } else if (step.kind === 'fork') {
      const handle: TaskHandle = { task: step.task, id: id++ };
      forks.set(handle.id, { task: step.task, args: step.args });
      order.push(`fork ${step.task}`);
      next = steps.next(handle);
    } else {
      const f = forks.get(step.handle.id)!;
      order.push(`join ${f.task}`);
      next = steps.next(runFrameTask(f.task, f.args, cache));
    }
  }
  return next.value;
}

const summary = (r: FrameAnalysis) => JSON.stringify({ s: r.sample, f: r.footpoints?.footpoints, n: r.velocityNotes, w: r.waiting });

describe('frame steps', () => {
  it('forks run at their joins give the same samples, footpoints and notes as runSteps, bit for bit', () => {
    for (const withVelocity of [false, true]) {
      const region = demoRegion({ frames: 4, size: 96, withVelocity, cadenceS: 180, storyH: 72, storyStartH: 16 });
      let a: AnalysisState = {}, b: AnalysisState = {};
      const ca: FluxKernelCache = new Map(), cb: FluxKernelCache = new Map();
      const order: string[] = [];
      for (let i = 0; i < 4; i++) {
        const f = region.frameAt(i);
        const ra = analyseFrame(f, a, {}, ca);
        const rb = runAtJoin(analyseFrameSteps(f, b, {}, cb), cb, order);
        a = ra.state; b = rb.state;
        expect(summary(rb)).toBe(summary(ra));
        if (i > 0) expect(Number.isFinite(ra.sample!.total) && ra.sample!.total !== 0).toBe(true);
      }
      // Without velocities each frame after the first forks the inference, then the split's two
      // parts, each joined after work that does not need it; with velocities only the split.
      const split = ['fork splitPart', 'fork splitPart', 'join splitPart', 'join splitPart'];
      const perFrame = withVelocity ? split : ['fork inferVelocity', 'join inferVelocity', ...split];
      expect(order).toEqual((withVelocity ? [0, 1, 2, 3] : [1, 2, 3]).flatMap(() => perFrame));
    }
  });

  it('a forked task that fails throws at its join, inside the analysis, with its own error', () => {
    const region = demoRegion({ frames: 2, size: 32, withVelocity: false, cadenceS: 180, storyH: 72, storyStartH: 16 });
    const a = region.frameAt(0), b = { ...region.frameAt(0) }; // same time: no interval
    function* steps(): FrameSteps<string> {
      const h = yield* fork('inferVelocity', [a, b, undefined]);
      try {
        yield* join(h);
        return 'no error';
      } catch (e) {
        return e instanceof InputError ? `${e.field}: ${e.problem}` : String(e);
      }
    }
    expect(runSteps(steps())).toMatch(/^time: must be later than/);
  });

  it('a handle joined twice is refused', () => {
    const region = demoRegion({ frames: 2, size: 32, withVelocity: false, cadenceS: 180, storyH: 72, storyStartH: 16 });
    function* steps(): FrameSteps<number> {
      const h = yield* fork('inferVelocity', [region.frameAt(0), region.frameAt(1), undefined]);
      yield* join(h);
      return (yield* join(h)).dtS;
    }
    expect(() => runSteps(steps())).toThrow(/joined twice/);
  });
});
