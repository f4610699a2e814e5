// When the viewer socket drops, the page tries again: quickly at first (a server restart takes a
// second or two), then backing off so a server that stays down is not hammered.

/** Delay before reconnect attempt number `attempt` (0-based): base * 2^attempt, at most cap, ms.
 *  jitter in [0, 1) adds up to a quarter of the delay so many pages do not retry in step. */
export function reconnectDelayMs(attempt: number, jitter = 0, baseMs = 500, capMs = 10_000): number {
  const a = Math.max(0, Math.floor(attempt));
  const d = Math.min(capMs, baseMs * Math.pow(2, Math.min(a, 30)));
  const j = Math.min(Math.max(jitter, 0), 0.999999);
  return Math.round(d * (1 + 0.25 * j));
}
