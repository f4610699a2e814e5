// The files of a region under the data folder - frames/<region>/, maps/<region>/ and
// inbox/<region>/ - after the region was removed, renamed or reset. The store changes the rows
// and records the file work as a chore in the same transaction (store.ts, `region_chores`); this
// does the work and deletes the chore. A crash in between leaves the chore, done again at the
// next start (idempotent: what is already moved or removed is not there any more). Files that
// rows of a region of the old name still name (a region made under that name since) are left in
// place, and an inbox folder is moved or removed only when no region of its name exists.
import { lstat, mkdir, open, readdir, rename, rm, rmdir } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { RegionChore, Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';

/** The folders under the data folder that hold a subfolder per region. */
export const REGION_FOLDERS = ['frames', 'maps', 'inbox'] as const;

const exists = async (path: string) => { try { await lstat(path); return true; } catch { return false; } };

/** `path`, or `path.1`, `path.2`, ... : the first that does not exist. */
async function freeName(path: string): Promise<string> {
  for (let i = 0; ; i++) {
    const p = i === 0 ? path : `${path}.${i}`;
    if (!(await exists(p))) return p;
  }
}

async function syncFolder(dir: string): Promise<void> {
  try {
    const d = await open(dir, 'r');
    try { await d.sync(); } finally { await d.close(); }
  } catch { /* gone or not a folder: nothing to make durable */ }
}

/**
 * Moves the folder `src` to `dst`. When `dst` exists already (files landed there meanwhile) the
 * two are merged: each entry is moved in, a file of the same name in both goes beside the other
 * under a free name (`NAME.1`). Entries `keep` names (relative to `src`) stay where they are.
 */
export async function moveTree(src: string, dst: string, keep: (rel: string) => boolean = () => false, rel = ''): Promise<void> {
  let st;
  try { st = await lstat(src); } catch { return; }
  if (!st.isDirectory()) return;
  await mkdir(dirname(dst), { recursive: true, mode: 0o700 });
  if (!(await exists(dst))) {
    try {
      if (!(await anyKept(src, keep, rel))) { await rename(src, dst); return; }
    } catch (e) {
      if (!['ENOTEMPTY', 'EEXIST'].includes((e as { code?: string }).code ?? '')) throw e;
    }
  }
  await mkdir(dst, { recursive: true, mode: 0o700 });
  for (const e of await readdir(src, { withFileTypes: true })) {
    const from = join(src, e.name), r = rel ? join(rel, e.name) : e.name;
    if (e.isDirectory()) { await moveTree(from, join(dst, e.name), keep, r); continue; }
    if (keep(r)) continue;
    await rename(from, await freeName(join(dst, e.name)));
  }
  await rmdir(src).catch(() => undefined); // still holds what was kept
}

async function anyKept(dir: string, keep: (rel: string) => boolean, rel: string): Promise<boolean> {
  for (const e of await readdir(dir, { withFileTypes: true })) {
    const r = rel ? join(rel, e.name) : e.name;
    if (e.isDirectory() ? await anyKept(join(dir, e.name), keep, r) : keep(r)) return true;
  }
  return false;
}

/** Removes the folder `dir` but for the files `keep` names (relative to `dir`). */
async function removeTree(dir: string, keep: (rel: string) => boolean): Promise<void> {
  let entries;
  try { entries = await readdir(dir, { withFileTypes: true }); } catch { return; }
  for (const e of entries) {
    if (!e.isDirectory() && keep(e.name)) continue;
    await rm(join(dir, e.name), { recursive: true, force: true });
  }
  await rmdir(dir).catch(() => undefined);
}

/** Does a chore's file work (see the top of this file). */
export async function doChore(store: Store, chore: RegionChore): Promise<void> {
  const data = store.dataDir;
  // Rows that name the old name now belong to a region made since: their files stay.
  const named = store.regionFiles(chore.name);
  const regionNow = store.region(chore.name) !== undefined;
  for (const folder of ['frames', 'maps'] as const) {
    const keep = (rel: string) => named.has(join(folder, chore.name, rel));
    const dir = join(data, folder, chore.name);
    if (chore.kind === 'rename') await moveTree(dir, join(data, folder, chore.target!), keep);
    else await removeTree(dir, keep);
  }
  if (chore.kind !== 'reset' && !regionNow) {
    const inbox = join(data, 'inbox', chore.name);
    if (chore.kind === 'rename') await moveTree(inbox, join(data, 'inbox', chore.target!));
    else await rm(inbox, { recursive: true, force: true });
  }
  // The moves and removals are on disk before the chore is struck off.
  for (const folder of REGION_FOLDERS) await syncFolder(join(data, folder));
}

/** Does the chore and strikes it off; a failure is logged and the chore stays for the next start. */
export async function finishChore(store: Store, writer: StoreWriter, chore: RegionChore, log: (line: string) => void): Promise<boolean> {
  try {
    await doChore(store, chore);
    await writer.call('choreDone', chore.id);
    return true;
  } catch (e) {
    log(`the files of region ${chore.name} (${chore.kind}${chore.target ? ` to ${chore.target}` : ''}) could not all be ${chore.kind === 'rename' ? 'moved' : 'removed'}: ${(e as Error).message}; tried again at the next start`);
    return false;
  }
}

/** At start, before any region is resumed: the chores a crash left. */
export async function finishLeftChores(store: Store, writer: StoreWriter, log: (line: string) => void): Promise<void> {
  for (const chore of store.regionChores()) {
    if (await finishChore(store, writer, chore, log)) log(`finished the file work of an interrupted ${chore.kind} of region ${chore.name}${chore.target ? ` (to ${chore.target})` : ''}`);
  }
}
