// A replay of an archive into a consumer (the server's ingest, the same pipeline as live frames):
// frames are read one at a time as they fall due (pacing.ts) and handed over in order; the next
// one is not read before the consumer has taken the last (so speed 0 means "as fast as the
// pipeline goes"). Controls: pause, resume, seek (frame index or ISO time), speed, stop; the
// status has the shape of docs/api.md's `replay` field.

import type { Frame } from '../core/frame.js';
import { InputError } from '../core/inputError.js';
import type { PacingClock, PacingStateName } from './pacing.js';
import { paceFrames, pacingState } from './pacing.js';

/**
 * What a replay plays: frames in time order, each read when it falls due. An Archive (a folder)
 * is one; so are the demo region and a region's stored frames (server/regionReplay.ts).
 */
export interface ReplaySource<F = Frame> {
  /** The frames' times, UTC ms, ascending. */
  readonly entries: readonly { readonly time: number }[];
  frame(i: number): Promise<F>;
}

export interface ReplayStatus {
  /** 'done' once the last frame is through the consumer (or the replay was stopped). */
  readonly state: PacingStateName;
  readonly speed: number;
  /** Index of the next frame to hand over (total when done). */
  readonly position: number;
  readonly total: number;
}

export interface PacedReplay {
  status(): ReplayStatus;
  pause(): void;
  resume(): void;
  /** A frame index, or an ISO 8601 time (the first frame at or after it). */
  seek(target: number | string): void;
  setSpeed(speed: number): void;
  stop(): void;
  /** Resolves when the archive is through (or stopped); rejects when the consumer throws. */
  readonly done: Promise<void>;
}

/** The wall clock: Date.now and a setTimeout that an abort ends early. */
export const wallClock: PacingClock = {
  now: () => Date.now(),
  sleep: (ms, wake) => new Promise<void>((resolve) => {
    if (wake.aborted) return resolve();
    const t = setTimeout(done, Math.max(0, Math.min(ms, 2 ** 31 - 1)));
    function done() { clearTimeout(t); wake.removeEventListener('abort', done); resolve(); }
    wake.addEventListener('abort', done);
  }),
};

export function startReplay<F = Frame>(
  archive: ReplaySource<F>, speed: number, consume: (frame: F, index: number) => Promise<void>,
  options: { clock?: PacingClock; maxWaitMs?: number; start?: number } = {},
): PacedReplay {
  const times = archive.entries.map((e) => e.time);
  const { control, indices } = paceFrames(times, speed, options.clock ?? wallClock, {
    ...(options.maxWaitMs !== undefined && { maxWaitMs: options.maxWaitMs }),
    ...(options.start !== undefined && { start: options.start }),
  });
  let finished = false;
  const done = (async () => {
    try {
      for await (const i of indices) await consume(await archive.frame(i), i);
    } finally {
      finished = true;
    }
  })();
  return {
    status() {
      const p = control.current();
      // The pacing is through as soon as it hands over the last frame, but the consumer may still
      // be taking it: 'done' only once the consumer has returned (a caller that sees 'done' may
      // count on every frame having been taken; a seek then starts a new run, not a second one
      // beside the frame in flight).
      const pacing = pacingState(p);
      const state = finished ? 'done' : pacing === 'done' ? 'playing' : pacing;
      return { state, speed: p.speed, position: p.position, total: times.length };
    },
    pause: () => control.pause(),
    resume: () => control.resume(),
    seek(target) {
      if (typeof target === 'number') { control.seek({ index: target }); return; }
      const t = Date.parse(target);
      if (!/^\d{4}-\d{2}-\d{2}T/.test(target) || !Number.isFinite(t)) throw new InputError('replay', 'seek', `"${target}" is neither a frame index nor an ISO 8601 time`);
      control.seek({ time: t });
    },
    setSpeed: (s) => control.setSpeed(s),
    stop: () => control.stop(),
    done,
  };
}
