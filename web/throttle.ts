// How long to wait before a throttled action (a fetch at most once per interval). Pure.

/**
 * When to fetch after a request to: now (0) when the last fetch began at least `minGapMs` ago
 * (or never), else when that gap has passed.
 */
export function throttleDelay(lastStartMs: number | undefined, nowMs: number, minGapMs: number): number {
  return lastStartMs === undefined ? 0 : Math.max(0, lastStartMs + minGapMs - nowMs);
}
