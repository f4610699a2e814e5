// The bearer token: HELICORD_TOKEN when the operator sets it, otherwise made at first start,
// kept in <data>/token with mode 0600 and shown once (in the start-up log).
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { chmodSync, existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

export function loadOrCreateToken(dataDir: string, log: (line: string) => void, env = process.env): string {
  const fromEnv = env.HELICORD_TOKEN?.trim();
  if (fromEnv) return fromEnv;
  const path = join(dataDir, 'token');
  if (existsSync(path)) {
    chmodSync(path, 0o600);
    return readFileSync(path, 'utf8').trim();
  }
  const token = randomBytes(24).toString('base64url');
  writeFileSync(path, token + '\n', { mode: 0o600, flag: 'wx' });
  log(`ingest token (shown once; kept in ${path}, mode 0600): ${token}`);
  return token;
}

/** True when `header` is "Bearer <token>" (or `given` is the token), compared in constant time. */
export function tokenMatches(token: string, header: string | undefined, given?: string | null): boolean {
  let candidate: string | undefined;
  if (header && /^Bearer\s+/i.test(header)) candidate = header.replace(/^Bearer\s+/i, '').trim();
  else if (given) candidate = given;
  if (!candidate) return false;
  const a = Buffer.from(candidate), b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b);
}

/** Loopback addresses (IPv4, IPv6, IPv4-mapped). */
export function isLoopback(address: string | undefined): boolean {
  if (!address) return false;
  return address === '::1' || address.startsWith('127.') || address.startsWith('::ffff:127.');
}
