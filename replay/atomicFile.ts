// Durable file writes: write a temporary file beside the target, fsync it, rename it over the
// target, fsync the folder, so that after a crash the file is either whole or absent.
import { mkdir, open, rename, rm } from 'node:fs/promises';
import { dirname, join, basename } from 'node:path';
import { randomBytes } from 'node:crypto';

export async function writeFileAtomic(path: string, data: Uint8Array | string, mode = 0o644): Promise<void> {
  const dir = dirname(path);
  await mkdir(dir, { recursive: true });
  const tmp = join(dir, `.${basename(path)}.${randomBytes(6).toString('hex')}.tmp`);
  const fh = await open(tmp, 'w', mode);
  try {
    await fh.writeFile(data);
    await fh.sync();
  } catch (e) {
    await fh.close().catch(() => undefined);
    await rm(tmp, { force: true });
    throw e;
  }
  await fh.close();
  await rename(tmp, path);
  const d = await open(dir, 'r');
  try { await d.sync(); } finally { await d.close(); }
}
