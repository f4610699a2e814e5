// A full disk (or an exhausted quota) is a state the monitor waits out, not a failure of the
// frame: writes that fail this way are retried once space returns and the sender is told to come
// back later. These helpers recognise such errors from Node's file system and from SQLite.

/** Error codes that mean "no space": ENOSPC, EDQUOT (file system), SQLITE_FULL (the database). */
const CODES = new Set(['ENOSPC', 'EDQUOT', 'SQLITE_FULL']);

/** True when `e` says the disk (or quota) is full. */
export function isDiskFull(e: unknown): boolean {
  if (e === null || typeof e !== 'object') return false;
  const code = (e as { code?: unknown }).code;
  if (typeof code === 'string' && CODES.has(code)) return true;
  const message = String((e as { message?: unknown }).message ?? '');
  return /\b(ENOSPC|EDQUOT|SQLITE_FULL)\b|database or disk is full|no space left on device/i.test(message);
}

/** Thrown inside the pipeline when a frame must wait for disk space (it stays pending). */
export class DiskFullError extends Error {
  readonly code = 'ENOSPC';
  constructor(override readonly cause: unknown, readonly what: string) {
    super(`${what}: the disk is full (${String((cause as Error)?.message ?? cause)})`);
  }
}
