// The compute worker's second thread (server/frameAssistant.ts): a frame analysed with its forks
// offered to the assistant gives the serial analysis' results bit for bit, whether the assistant ran
// a task, the compute worker took it back, or the assistant died holding it; a failing task throws
// its own error at the join. The assistant is a real worker thread (dist/server/assistWorker.js).
import { afterAll, describe, expect, it } from 'vitest';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { AnalysisState, FrameAnalysis } from '../../core/frameAnalysis.js';
import { analyseFrame, analyseFrameSteps } from '../../core/frameAnalysis.js';
import type { FrameSteps } from '../../core/frameSteps.js';
import { fork, join } from '../../core/frameSteps.js';
import { runFrameTask } from '../../core/frameTasks.js';
import { InputError } from '../../core/inputError.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { FrameAssistant, runStepsAssisted } from '../../server/frameAssistant.js';

const summary = (r: FrameAnalysis) => JSON.stringify({ s: r.sample, f: r.footpoints?.footpoints, n: r.velocityNotes, w: r.waiting });
const assistant = new FrameAssistant();
afterAll(() => assistant.close());

describe('frame assistant', () => {
  it('a demo sequence analysed with the assistant equals the serial analysis, sample for sample', async () => {
    const region = demoRegion({ frames: 5, size: 128, withVelocity: false, cadenceS: 180, storyH: 72, storyStartH: 16 });
    let a: AnalysisState = {}, b: AnalysisState = {};
    const ca: FluxKernelCache = new Map(), cb: FluxKernelCache = new Map();
    const before = { ...assistant.counts };
    for (let i = 0; i < 5; i++) {
      const f = region.frameAt(i);
      const ra = analyseFrame(f, a, {}, ca);
      const rb = await runStepsAssisted(analyseFrameSteps(f, b, {}, cb), assistant, cb);
      a = ra.state; b = rb.state;
      expect(summary(rb)).toBe(summary(ra));
      expect(rb.maps.vx).toEqual(ra.maps.vx);
      expect(rb.maps.gTheta).toEqual(ra.maps.gTheta);
    }
    // Three forks per frame after the first (the inference and the two parts of the split), each run once somewhere.
    const c = assistant.counts;
    expect(c.assisted + c.takenBack + c.failed + c.keptHere - before.assisted - before.takenBack - before.failed - before.keptHere).toBe(12);
    // The assistant holds one task of a frame at a time: the split's second part is kept here.
    expect(c.keptHere - before.keptHere).toBeGreaterThanOrEqual(4);
    expect(c.failed).toBe(before.failed);
  });

  it('a task the assistant ran comes back from it; one it had not started is run here; the same value either way', async () => {
    const region = demoRegion({ frames: 2, size: 64, withVelocity: false, cadenceS: 180, storyH: 72, storyStartH: 16 });
    const args = [region.frameAt(0), region.frameAt(1), undefined] as const;
    const local = runFrameTask('inferVelocity', args);
    const ran = assistant.offer('inferVelocity', args);
    await ran.reply; // the assistant claimed and ran it before anyone asked
    const before = assistant.counts.assisted;
    const fromAssistant = await assistant.result(ran, 'inferVelocity', args) as typeof local;
    expect(assistant.counts.assisted).toBe(before + 1);
    expect(fromAssistant.vx).toEqual(local.vx);
    expect(fromAssistant.notes).toEqual(local.notes);
  });

  it('an assistant that dies holding a task: the task is run here, and a new assistant takes the next one', async () => {
    const region = demoRegion({ frames: 2, size: 96, withVelocity: false, cadenceS: 180, storyH: 72, storyStartH: 16 });
    const args = [region.frameAt(0), region.frameAt(1), undefined] as const;
    const local = runFrameTask('inferVelocity', args);
    const lost = assistant.offer('inferVelocity', args);
    await assistant.stopThread();
    const failed = assistant.counts.failed, takenBack = assistant.counts.takenBack;
    const value = await assistant.result(lost, 'inferVelocity', args) as typeof local;
    expect(value.vx).toEqual(local.vx);
    expect(assistant.counts.failed + assistant.counts.takenBack).toBe(failed + takenBack + 1);
    const next = assistant.offer('inferVelocity', args);
    await next.reply;
    expect(((await assistant.result(next, 'inferVelocity', args)) as typeof local).vx).toEqual(local.vx);
  });

  it('a task that fails throws its own error at the join (an InputError naming the field)', async () => {
    const region = demoRegion({ frames: 1, size: 32, withVelocity: false, cadenceS: 180, storyH: 72, storyStartH: 16 });
    const f = region.frameAt(0);
    function* steps(): FrameSteps<string> {
      const h = yield* fork('inferVelocity', [f, { ...f }, undefined]);
      try {
        yield* join(h);
        return 'no error';
      } catch (e) {
        return e instanceof InputError ? `${e.field}: ${e.problem}` : `not an InputError: ${String(e)}`;
      }
    }
    expect(await runStepsAssisted(steps(), assistant)).toMatch(/^time: must be later than/);
  });
});
