// The frame assistant: a second thread beside a compute worker that runs the forked parts of one
// frame's analysis (core/frameTasks.ts) when it gets to them before the compute worker takes them
// back. It keeps its own kernel cache; it holds no region state.
import { parentPort } from 'node:worker_threads';
import { isFrameTaskName, runFrameTask } from '../core/frameTasks.js';
import type { FrameCache, FrameTaskArgs, FrameTaskName } from '../core/frameTasks.js';
import type { AssistReply, AssistRequest } from './assistMessages.js';
import { CLAIMED_BY_ASSISTANT } from './assistMessages.js';

const cache: FrameCache = new Map();

parentPort!.on('message', (req: AssistRequest) => {
  let reply: AssistReply;
  if (Atomics.compareExchange(new Int32Array(req.claim), 0, 0, CLAIMED_BY_ASSISTANT) !== 0) {
    reply = { id: req.id, ok: true, skipped: true };
  } else if (!isFrameTaskName(req.task)) {
    reply = { id: req.id, ok: false, message: `unknown task ${String(req.task)}` };
  } else {
    try {
      reply = { id: req.id, ok: true, value: runFrameTask(req.task, req.args as FrameTaskArgs<FrameTaskName>, cache) };
    } catch (e) {
      reply = { id: req.id, ok: false, message: (e as Error).message ?? String(e) };
    }
  }
  parentPort!.postMessage(reply);
});
