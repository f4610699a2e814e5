// A compute worker's second thread for one frame (server/assistWorker.ts), and the driver that
// runs a frame's steps (core/frameSteps.ts) with it: a fork is offered to the assistant when it
// holds no other task of this frame (else it is kept here) and the analysis goes on; at the join, a
// task kept here or not yet started by the assistant is run here, so a busy or lost assistant
// costs the copy of the arguments, never a wait. A task the assistant failed is run again here
// (tasks are pure), so its error is the one the serial analysis gives.
import type { FrameSteps, TaskHandle } from '../core/frameSteps.js';
import type { FrameCache, FrameTaskArgs, FrameTaskName } from '../core/frameTasks.js';
import { runFrameTask } from '../core/frameTasks.js';
import type { AssistReply, AssistRequest } from './assistMessages.js';
import { TAKEN_BACK } from './assistMessages.js';
import { RestartingWorker, compiledWorkerUrl } from './restartingWorker.js';

/** A task handed to the assistant. */
interface Offer {
  readonly claim: Int32Array;
  readonly reply: Promise<AssistReply>;
}

export class FrameAssistant {
  private readonly worker: RestartingWorker<AssistRequest, AssistReply>;
  private nextId = 1;
  /** Tasks run by the assistant, taken back, failed there, and kept here (never offered): for the tests. */
  readonly counts = { assisted: 0, takenBack: 0, failed: 0, keptHere: 0 };

  constructor(log: (line: string) => void = () => undefined) {
    this.worker = new RestartingWorker<AssistRequest, AssistReply>(compiledWorkerUrl('assistWorker.js'), 'frame assistant', log);
  }

  offer(task: FrameTaskName, args: unknown): Offer {
    const claim = new SharedArrayBuffer(4);
    const reply = this.worker.request({ id: this.nextId++, task, args, claim });
    reply.catch(() => undefined); // a lost assistant is handled at the join
    return { claim: new Int32Array(claim), reply };
  }

  /** The result of an offered task: taken back and run here when not started, else the assistant's. */
  async result<K extends FrameTaskName>(offer: Offer, task: K, args: FrameTaskArgs<K>, cache?: FrameCache): Promise<unknown> {
    if (Atomics.compareExchange(offer.claim, 0, 0, TAKEN_BACK) === 0) {
      this.counts.takenBack++;
      return runFrameTask(task, args, cache);
    }
    let reply: AssistReply | undefined;
    try {
      reply = await offer.reply;
    } catch {
      reply = undefined; // the assistant died with the task: run it here
    }
    if (reply?.ok && 'value' in reply) {
      this.counts.assisted++;
      return reply.value;
    }
    this.counts.failed++;
    return runFrameTask(task, args, cache);
  }

  /** Ends the assistant thread as if it had died (a new one starts); for tests. */
  stopThread(): Promise<number> {
    return this.worker.terminate();
  }

  close(): Promise<void> {
    return this.worker.close();
  }
}

/**
 * Runs a frame's steps with forks offered to `assistant` (core/frameSteps.ts runSteps without one:
 * the same results, in the same order).
 */
export async function runStepsAssisted<R>(steps: FrameSteps<R>, assistant: FrameAssistant, cache?: FrameCache): Promise<R> {
  const open = new Map<number, { task: FrameTaskName; args: FrameTaskArgs<FrameTaskName>; offer?: Offer }>();
  // The task the assistant holds: one at a time, so arguments are not copied for a task that
  // would wait behind it and be taken back anyway.
  let held: Offer | undefined;
  let id = 0;
  let next = steps.next();
  while (!next.done) {
    const step = next.value;
    if (step.kind === 'threads') {
      next = steps.next(2); // this thread and the assistant
      continue;
    }
    if (step.kind === 'fork') {
      const handle: TaskHandle = { task: step.task, id: id++ };
      let offer: Offer | undefined;
      if (!held) held = offer = assistant.offer(step.task, step.args);
      open.set(handle.id, { task: step.task, args: step.args, ...(offer && { offer }) });
      next = steps.next(handle);
      continue;
    }
    const o = open.get(step.handle.id);
    if (!o) throw new Error(`task ${step.handle.task} #${step.handle.id} joined twice or never forked`);
    open.delete(step.handle.id);
    let outcome: { ok: true; value: unknown } | { ok: false; error: unknown };
    try {
      if (o.offer) {
        outcome = { ok: true, value: await assistant.result(o.offer, o.task, o.args, cache) };
        if (held === o.offer) held = undefined;
      } else {
        assistant.counts.keptHere++;
        outcome = { ok: true, value: runFrameTask(o.task, o.args, cache) };
      }
    } catch (error) {
      outcome = { ok: false, error };
    }
    next = outcome.ok ? steps.next(outcome.value) : steps.throw(outcome.error);
  }
  return next.value;
}
