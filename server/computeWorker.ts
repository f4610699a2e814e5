// A compute worker: runs the core's per-frame analysis for the regions the pool gives it, keeps
// each region's analysis state (opaque here) between frames, reads the stored frame from its map
// file and writes the result maps atomically beside it. Nothing heavy runs on the server's loop.
// Set up with `assist` (its workerData), the parts of a frame that can run at once go to a second
// thread (server/frameAssistant.ts), so that one region's frame uses two cores.
import { readFile } from 'node:fs/promises';
import { parentPort, workerData } from 'node:worker_threads';
import { analyseFrameSteps } from '../core/frameAnalysis.js';
import { runSteps } from '../core/frameSteps.js';
import type { Frame } from '../core/frame.js';
import type { FrameCache } from '../core/frameTasks.js';
import type { AnalysisMemory } from '../core/analysisMemory.js';
import { analysisMemory, restoreAnalysisState } from '../core/analysisMemory.js';
import type { AnalysisSettings, AnalysisState } from '../core/frameAnalysis.js';
import { footpointReport } from '../core/footpoints/footpointReport.js';
import { InputError } from '../core/inputError.js';
import { writeFileAtomic } from './atomicFile.js';
import { isDiskFull } from './diskFull.js';
import { decodeFrame, encodeFrameBlob } from './frameBlob.js';
import { FrameAssistant, runStepsAssisted } from './frameAssistant.js';
import type { WarmUpNotice, WorkerReply, WorkerRequest, WorkerSetup } from './computeMessages.js';
import { WARM_UP_FRAMES, warmUpAnalysis } from './analysisWarmUp.js';

const states = new Map<string, AnalysisState>();
const cache: FrameCache = new Map();
let assistant: FrameAssistant | undefined;
const setup = (workerData ?? {}) as WorkerSetup;

/** The analysis of one frame by this worker's step runner (with the assistant when set up with one). */
function analyseWith(frame: Frame, state: AnalysisState, settings: AnalysisSettings, frameCache: FrameCache) {
  const steps = analyseFrameSteps(frame, state, settings, frameCache);
  if (!setup.assist) return Promise.resolve(runSteps(steps, frameCache));
  assistant ??= new FrameAssistant((line) => process.stderr.write(line + '\n'));
  return runStepsAssisted(steps, assistant, frameCache);
}

async function load(path: string) {
  return decodeFrame(await readFile(path), path);
}

async function handle(req: WorkerRequest): Promise<WorkerReply> {
  const settings = req.settings as AnalysisSettings;
  if (req.prime === 'reset') states.delete(req.region);
  else if (req.prime) {
    // Rebuild the state after the last processed frame from the frames before it and the memory
    // stored with it: the same state as if the worker had gone on without a stop.
    const frames = [];
    for (const path of req.prime.frames) frames.push(await load(path));
    states.set(req.region, restoreAnalysisState(frames, req.prime.memory as AnalysisMemory | undefined, settings));
  }
  const frame = await load(req.framePath);
  const result = await analyseWith(frame, states.get(req.region) ?? {}, settings, cache);
  states.set(req.region, result.state);
  const maps = result.maps;
  let mapsWritten = false;
  if (maps.gTheta || maps.labels || maps.vx) {
    const bytes = encodeFrameBlob(
      { time: frame.time, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy },
      { gtheta: maps.gTheta, vx: maps.vx, vy: maps.vy, ...(maps.vz && { vz: maps.vz }) }, { labels: maps.labels },
    );
    await writeFileAtomic(req.mapsPath, bytes, 0o600);
    mapsWritten = true;
  }
  // The footpoint table and events, JSON-ready (no maps, no tracking state).
  const fp = result.footpoints ? footpointReport(result.footpoints, true) : undefined;
  return {
    id: req.id, ok: true,
    ...(result.sample && { sample: result.sample }),
    ...(result.waiting !== undefined && { waiting: result.waiting }),
    mapsWritten,
    ...(fp && { footpoints: { ...fp, events: undefined }, events: fp.events }),
    memory: analysisMemory(result.state),
  };
}

// The warm-up (server/analysisWarmUp.ts) runs until the first request comes, which then waits for
// the synthetic frame in progress only.
let requested = false;
const warmUpStart = performance.now();
const warmedUp = setup.warmUp
  ? warmUpAnalysis(async (frame, state, frameCache) => (await analyseWith(frame, state, {}, frameCache)).state, () => requested)
    .then((frames) => parentPort!.postMessage({ id: 0, warmedUp: { frames, of: WARM_UP_FRAMES, ms: performance.now() - warmUpStart } } satisfies WarmUpNotice))
  : Promise.resolve();

parentPort!.on('message', (req: WorkerRequest) => {
  requested = true;
  warmedUp.then(() => handle(req)).then(
    (reply) => parentPort!.postMessage(reply),
    (e: unknown) => {
      states.delete(req.region);
      const err = e instanceof InputError
        ? { source: e.source, field: e.field, problem: e.problem, message: e.message }
        : { source: 'analysis', field: '(frame)', problem: (e as Error).message ?? String(e), message: String((e as Error).stack ?? e), ...(isDiskFull(e) && { diskFull: true }) };
      parentPort!.postMessage({ id: req.id, ok: false, error: err } satisfies WorkerReply);
    },
  );
});
