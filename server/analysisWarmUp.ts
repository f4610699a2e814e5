// A compute worker's warm-up: before its first frame, it analyses a short synthetic sequence (the
// demo region's story, replay/demo/demoRegion.ts, small) through the same step runner as real
// frames, so that V8 has compiled and optimised the analysis, and the frame assistant's copy of
// it, by the time a campaign's first frames arrive. Without it a fresh monitor's first frames at
// 512^2 take 1.5-3x the steady time (docs/speed.md). The warm-up keeps its own state and kernel
// cache and throws both away (the frame assistant keeps, in its own cache, the kernel and
// workspaces of the 256^2 grid: a few MiB); it stops between two frames as soon as `stop()` says
// so (a real frame is waiting), so a frame waits at most for one small synthetic frame.
import type { Frame } from '../core/frame.js';
import type { AnalysisState } from '../core/frameAnalysis.js';
import type { FrameCache } from '../core/frameTasks.js';
import { demoRegion } from '../replay/demo/demoRegion.js';

/** Grid side of the warm-up frames: small (about 0.1 s each once optimised) but the same code paths. */
export const WARM_UP_SIZE = 256;
/** Frames without velocities (inferred between pairs), then frames that carry them. */
export const WARM_UP_INFERRED = 10;
export const WARM_UP_GIVEN = 3;
export const WARM_UP_FRAMES = WARM_UP_INFERRED + WARM_UP_GIVEN;

/** The frames of the warm-up, in the order they are analysed (two sequences: each starts afresh). */
export function warmUpSequences(): Frame[][] {
  const sequence = (frames: number, withVelocity: boolean) => {
    // Hours 30-36 of the demo story: several footpoints, turning and moving (the paths a campaign takes).
    const region = demoRegion({ frames, size: WARM_UP_SIZE, withVelocity, cadenceS: 720, storyH: 72, storyStartH: 30 });
    return Array.from({ length: frames }, (_, k) => region.frameAt(k));
  };
  return [sequence(WARM_UP_INFERRED, false), sequence(WARM_UP_GIVEN, true)];
}

/**
 * Runs `analyse` over the warm-up sequences, yielding to the event loop between frames; returns
 * the number of frames analysed (fewer when `stop()` turned true). Errors end the warm-up quietly
 * (it only speeds things up; a real frame's error is reported by its own analysis).
 */
export async function warmUpAnalysis(
  analyse: (frame: Frame, state: AnalysisState, cache: FrameCache) => Promise<AnalysisState>, stop: () => boolean,
): Promise<number> {
  let done = 0;
  try {
    for (const frames of warmUpSequences()) {
      let state: AnalysisState = {};
      const cache: FrameCache = new Map();
      for (const frame of frames) {
        await new Promise<void>((resolve) => setImmediate(resolve));
        if (stop()) return done;
        state = await analyse(frame, state, cache);
        done++;
      }
    }
  } catch {
    // ignored: see above
  }
  return done;
}
