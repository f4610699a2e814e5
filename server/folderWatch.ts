// The watched folder of a region: <data>/inbox/<region>/. Files that land there (fully written:
// chokidar waits until the size is stable) are read with loadFrameFile (replay/frameFiles.ts, in
// the intake worker) and go into the pipeline
// like any other frame. Files already taken (same path, size and mtime) are skipped at restart.
// Only the folder the server made from a checked region name is watched; nothing from a request
// names a path.
import { watch } from 'chokidar';
import type { FSWatcher } from 'chokidar';
import { mkdirSync, statSync } from 'node:fs';
import { basename, join } from 'node:path';
import type { Pipeline } from './pipeline.js';
import type { Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';

export class FolderWatch {
  private readonly watchers = new Map<string, FSWatcher>();

  constructor(private readonly store: Store, private readonly writer: StoreWriter, private readonly pipeline: Pipeline, private readonly log: (line: string) => void) {}

  folderOf(region: string): string {
    return join(this.store.dataDir, 'inbox', region);
  }

  /** Starts (or stops) watching a region's folder as its settings say. */
  sync(region: string, wanted: boolean): void {
    const have = this.watchers.get(region);
    if (wanted && !have) this.start(region);
    if (!wanted && have) { void have.close(); this.watchers.delete(region); }
  }

  private start(region: string): void {
    const dir = this.folderOf(region);
    mkdirSync(dir, { recursive: true });
    const w = watch(dir, {
      depth: 0,
      ignoreInitial: false,
      ignored: (path: string) => basename(path).startsWith('.') || /\.(tmp|part)$/i.test(path),
      awaitWriteFinish: { stabilityThreshold: 200, pollInterval: 50 },
    });
    w.on('add', (path) => void this.take(region, path));
    w.on('change', (path) => void this.take(region, path));
    w.on('error', (e) => this.log(`watching ${dir}: ${(e as Error).message}`));
    this.watchers.set(region, w);
  }

  private async take(region: string, path: string): Promise<void> {
    let size: number, mtime: number;
    try {
      const st = statSync(path);
      if (!st.isFile()) return;
      size = st.size; mtime = Math.round(st.mtimeMs);
    } catch { return; }
    if (this.store.watchedFileSeen(region, path, size, mtime)) return;
    const source = `inbox/${region}/${basename(path)}`;
    // Read with loadFrameFile in the intake worker.
    const answer = await this.pipeline.ingest({ region, payload: { kind: 'file', path }, source, mayCreate: true });
    if (answer.status < 500) await this.writer.call('markWatchedFile', region, path, size, mtime);
  }

  async close(): Promise<void> {
    await Promise.all([...this.watchers.values()].map((w) => w.close()));
    this.watchers.clear();
  }
}
