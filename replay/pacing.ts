// When each frame of a replay is due. A replay at speed X plays the archive's own times X times
// faster: frame i is due when the playback clock, which runs X times the wall clock from the
// moment of the last anchor, reaches the frame's time. Speed 0 means as fast as possible.
// Pause stops the playback clock, resume restarts it where it stopped, seek moves it (to a frame
// index or a time) and makes that frame due at once, a change of speed keeps the playback time.
//
// The state is a plain value and every operation returns a new one, given the wall time `now`
// (ms): no timers, no clock of its own, so tests drive it with a fake clock. `paceFrames` is the
// small async driver on top, with the clock and the sleeping passed in.

export interface Pacing {
  /** Frame times, UTC ms, ascending. */
  readonly times: readonly number[];
  /** Playback speed: archive seconds per wall second; 0 = as fast as possible. */
  readonly speed: number;
  /** Index of the next frame to hand out (times.length when done). */
  readonly position: number;
  /** Playback time at the anchor (archive ms), and the wall time of the anchor (ms). */
  readonly anchorTime: number;
  readonly anchorWall: number;
  /** Wall time the pause began, when paused. */
  readonly pausedAt?: number;
  /** Longest wait between two frames, wall ms (long gaps in an archive are not sat through). */
  readonly maxWaitMs: number;
}

export type PacingStateName = 'playing' | 'paused' | 'done';

function checkSpeed(speed: number): number {
  if (!Number.isFinite(speed) || speed < 0) throw new RangeError(`replay speed must be 0 (as fast as possible) or a positive factor, got ${speed}`);
  return speed;
}

/** Options of a replay's start. */
export interface PacingOptions {
  /** Longest wait between two frames, wall ms. Default: no cap. */
  readonly maxWaitMs?: number;
  /** Index of the first frame to hand out (a replay resumed after a restart). Default 0. */
  readonly start?: number;
}

/** Starts a replay of frames at `times` (ascending) at `speed`, frame `start` (0) due at `now`. */
export function startPacing(times: readonly number[], speed: number, now: number, options: PacingOptions = {}): Pacing {
  for (let i = 1; i < times.length; i++) {
    if (!(times[i] > times[i - 1])) throw new RangeError(`frame times must increase: frame ${i} is not after frame ${i - 1}`);
  }
  const start = options.start ?? 0;
  if (!Number.isInteger(start) || start < 0 || start > times.length) throw new RangeError(`replay start: frame index ${start} is outside 0..${times.length}`);
  return {
    times, speed: checkSpeed(speed), position: start,
    anchorTime: times[Math.min(start, times.length - 1)] ?? 0, anchorWall: now, maxWaitMs: options.maxWaitMs ?? Infinity,
  };
}

export function pacingState(p: Pacing): PacingStateName {
  if (p.position >= p.times.length) return 'done';
  return p.pausedAt !== undefined ? 'paused' : 'playing';
}

/** Wall time (ms) when the next frame is due: Infinity when paused or done. */
export function nextDueAt(p: Pacing): number {
  if (pacingState(p) !== 'playing') return Infinity;
  if (p.speed === 0) return p.anchorWall;
  const ahead = (p.times[p.position] - p.anchorTime) / p.speed;
  return p.anchorWall + Math.min(Math.max(ahead, 0), p.maxWaitMs);
}

/**
 * Hands out the next frame when it is due at `now`: its index and the new state, or undefined
 * (with nothing changed) when it is not due yet, paused or done.
 */
export function takeDue(p: Pacing, now: number): { index: number; pacing: Pacing } | undefined {
  const due = nextDueAt(p);
  if (!(due <= now)) return undefined;
  const index = p.position;
  // The next frame is timed from this one as it is taken, so a capped gap or a slow consumer
  // does not make the following frames rush to catch up.
  return { index, pacing: { ...p, position: index + 1, anchorTime: p.times[index], anchorWall: now } };
}

export function pause(p: Pacing, now: number): Pacing {
  if (p.pausedAt !== undefined || pacingState(p) === 'done') return p;
  return { ...p, pausedAt: now };
}

export function resume(p: Pacing, now: number): Pacing {
  if (p.pausedAt === undefined) return p;
  const { pausedAt, ...rest } = p;
  // The playback clock stood still while paused: shift the anchor by the pause.
  return { ...rest, anchorWall: p.anchorWall + (now - pausedAt) };
}

/** Index of the first frame at or after `time`. */
export function indexAtTime(times: readonly number[], time: number): number {
  let lo = 0, hi = times.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (times[mid] < time) lo = mid + 1; else hi = mid;
  }
  return lo;
}

/** Moves to frame `target.index` or to the first frame at or after `target.time`; it is due at once. */
export function seek(p: Pacing, target: { index: number } | { time: number }, now: number): Pacing {
  const index = 'index' in target ? target.index : indexAtTime(p.times, target.time);
  if (!Number.isInteger(index) || index < 0 || index > p.times.length) {
    throw new RangeError(`seek: frame index ${index} is outside 0..${p.times.length}`);
  }
  const anchorTime = p.times[Math.min(index, p.times.length - 1)] ?? 0;
  return { ...p, position: index, anchorTime, anchorWall: p.pausedAt !== undefined ? p.pausedAt : now };
}

/** Playback time now (archive ms): where the replay stands. */
export function playbackTime(p: Pacing, now: number): number {
  const wall = p.pausedAt ?? now;
  return p.anchorTime + (wall - p.anchorWall) * p.speed;
}

/** Changes the speed, keeping the playback time (and the pause, if any). */
export function setSpeed(p: Pacing, speed: number, now: number): Pacing {
  checkSpeed(speed);
  const wall = p.pausedAt ?? now;
  if (p.speed === 0 || speed === 0) {
    // From or to "as fast as possible": the next frame is the reference.
    const at = p.times[Math.min(p.position, p.times.length - 1)] ?? 0;
    return { ...p, speed, anchorTime: at, anchorWall: wall };
  }
  return { ...p, speed, anchorTime: playbackTime(p, now), anchorWall: wall };
}

/** The clock a driver needs: the wall time, and a wait that ends early when `wake` fires. */
export interface PacingClock {
  now(): number;
  sleep(ms: number, wake: AbortSignal): Promise<void>;
}

/** A replay in progress: the driver asks `pacing` each time, controls change it. */
export interface PacingControl {
  readonly current: () => Pacing;
  pause(): void;
  resume(): void;
  seek(target: { index: number } | { time: number }): void;
  setSpeed(speed: number): void;
  stop(): void;
}

/**
 * Yields frame indices as they fall due, until the end or stop(). Controls take effect at once
 * (a sleeping driver is woken). With speed 0 every frame is due immediately: the consumer's own
 * pace (awaiting each frame through the pipeline) sets the rate.
 */
export function paceFrames(times: readonly number[], speed: number, clock: PacingClock, options: PacingOptions = {}): { control: PacingControl; indices: AsyncGenerator<number> } {
  let pacing = startPacing(times, speed, clock.now(), options);
  let stopped = false;
  let wake = new AbortController();
  const change = (f: (p: Pacing, now: number) => Pacing) => { pacing = f(pacing, clock.now()); wake.abort(); };
  const control: PacingControl = {
    current: () => pacing,
    pause: () => change(pause),
    resume: () => change(resume),
    seek: (t) => change((p, now) => seek(p, t, now)),
    setSpeed: (s) => change((p, now) => setSpeed(p, s, now)),
    stop: () => { stopped = true; wake.abort(); },
  };
  async function* indices(): AsyncGenerator<number> {
    while (!stopped) {
      const now = clock.now();
      const taken = takeDue(pacing, now);
      if (taken) { pacing = taken.pacing; yield taken.index; continue; }
      if (pacingState(pacing) === 'done') return;
      wake = new AbortController();
      const due = nextDueAt(pacing);
      await clock.sleep(Number.isFinite(due) ? due - now : 2 ** 31 - 1, wake.signal);
    }
  }
  return { control, indices: indices() };
}
