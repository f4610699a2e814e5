// One frame's analysis as steps that say which parts may run at once. The analysis is a generator
// (core/frameAnalysis.ts analyseFrameSteps, core/measureRate.ts measureRateSteps) that forks a part
// (a named task of core/frameTasks.ts with its arguments), goes on with work that does not need it,
// and joins it where its result is needed. A driver decides where forks run:
//
// - `runSteps` runs each fork at once, in the caller's thread: the plain serial analysis (and says
//   there is one thread, so work that can be cut into parts is not);
// - the monitor's compute worker hands forks to a second thread and joins them when they come back
//   (server/assistedSteps.ts), so one frame uses both cores.
//
// Same tasks with the same arguments give the same results, so both drivers give the same numbers.
//
//   function* steps() { const h = yield* fork('inferVelocity', [a, b, undefined]); ...; const v = yield* join(h); return v.dtS; }
//   runSteps(steps(), cache)

import type { FrameCache, FrameTaskArgs, FrameTaskName, FrameTaskResult } from './frameTasks.js';
import { runFrameTask } from './frameTasks.js';

/** A ticket for a forked task, to be joined once. */
export interface TaskHandle<K extends FrameTaskName = FrameTaskName> {
  readonly task: K;
  readonly id: number;
}

export type FrameStep =
  | { readonly kind: 'fork'; readonly task: FrameTaskName; readonly args: FrameTaskArgs<FrameTaskName> }
  | { readonly kind: 'join'; readonly handle: TaskHandle }
  | { readonly kind: 'threads' };

/** An analysis written as steps, returning R. The driver answers a fork with a handle, a join with the result. */
export type FrameSteps<R> = Generator<FrameStep, R, unknown>;

/** Starts `task`; the analysis goes on and joins the handle later. */
export function* fork<K extends FrameTaskName>(task: K, args: FrameTaskArgs<K>): Generator<FrameStep, TaskHandle<K>, unknown> {
  return (yield { kind: 'fork', task, args } as FrameStep) as TaskHandle<K>;
}

/** The result of a forked task (its error, thrown here, when it failed). */
export function* join<K extends FrameTaskName>(handle: TaskHandle<K>): Generator<FrameStep, FrameTaskResult<K>, unknown> {
  return (yield { kind: 'join', handle }) as FrameTaskResult<K>;
}

/**
 * How many threads the driver runs forks on (1 for runSteps): work that can be cut into parts is
 * cut into this many (the parts join to the same result however many there are).
 */
export function* threads(): Generator<FrameStep, number, unknown> {
  return (yield { kind: 'threads' }) as number;
}

/** Runs the steps in this thread, each fork at once: the serial analysis. */
export function runSteps<R>(steps: FrameSteps<R>, cache?: FrameCache): R {
  const done = new Map<number, { ok: true; value: unknown } | { ok: false; error: unknown }>();
  let id = 0;
  let next = steps.next();
  while (!next.done) {
    const step = next.value;
    if (step.kind === 'threads') {
      next = steps.next(1);
    } else if (step.kind === 'fork') {
      const handle: TaskHandle = { task: step.task, id: id++ };
      try {
        done.set(handle.id, { ok: true, value: runFrameTask(step.task, step.args, cache) });
      } catch (error) {
        done.set(handle.id, { ok: false, error });
      }
      next = steps.next(handle);
    } else {
      const r = done.get(step.handle.id);
      if (!r) throw new Error(`task ${step.handle.task} #${step.handle.id} joined twice or never forked`);
      done.delete(step.handle.id);
      next = r.ok ? steps.next(r.value) : steps.throw(r.error);
    }
  }
  return next.value;
}
