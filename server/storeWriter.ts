// The main thread's handle on the store's writer thread (server/storeWorker.ts): the Store's
// write methods, called by name, answered in order.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Store } from './store.js';

export const WRITE_METHODS = [
  'createRegion', 'saveSettings', 'countDuplicate', 'setRegionAccumulation', 'insertFrame', 'rewind',
  'commitProcessed', 'recordRefusal', 'markWatchedFile', 'removeFrame', 'removeRegion', 'renameRegion',
  'resetRegion', 'choreDone',
] as const;
export type WriteMethod = (typeof WRITE_METHODS)[number];

export interface WriteRequest { readonly id: number; readonly method: WriteMethod; readonly args: unknown[] }
export type WriteReply = { readonly id: number; readonly ok: true; readonly result: unknown } | { readonly id: number; readonly ok: false; readonly error: string; readonly code?: string };

function workerUrl(): URL {
  const here = new URL('./storeWorker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  return new URL('../dist/server/storeWorker.js', import.meta.url);
}

type Method<K extends WriteMethod> = Store[K] extends (...a: infer A) => infer R ? (...a: A) => Promise<R> : never;

export class StoreWriter {
  private readonly worker: Worker;
  private readonly pending = new Map<number, { resolve: (v: unknown) => void; reject: (e: Error) => void }>();
  private nextId = 1;
  private failed: Error | undefined;

  constructor(dataDir: string, log: (line: string) => void = () => undefined) {
    this.worker = new Worker(workerUrl(), { workerData: { dataDir } });
    this.worker.on('message', (r: WriteReply) => {
      const p = this.pending.get(r.id);
      if (!p) return;
      this.pending.delete(r.id);
      if (r.ok) p.resolve(r.result);
      else p.reject(Object.assign(new Error(r.error), r.code !== undefined ? { code: r.code } : {}));
    });
    const fail = (why: string) => {
      // Without its writer the monitor cannot promise durability: every pending and later write fails.
      this.failed = new Error(`the store writer stopped: ${why}`);
      log(this.failed.message);
      for (const p of this.pending.values()) p.reject(this.failed);
      this.pending.clear();
    };
    this.worker.on('error', (e) => fail(e.message));
    this.worker.on('exit', (code) => { if (!this.failed) fail(`exit code ${code}`); });
  }

  call<K extends WriteMethod>(method: K, ...args: Parameters<Method<K>>): ReturnType<Method<K>> {
    if (this.failed) return Promise.reject(this.failed) as ReturnType<Method<K>>;
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      this.worker.postMessage({ id, method, args } satisfies WriteRequest);
    }) as ReturnType<Method<K>>;
  }

  /** Waits for the writes in flight, closes the writer's connection and ends the thread. */
  async close(): Promise<void> {
    while (this.pending.size > 0 && !this.failed) await new Promise((r) => setTimeout(r, 10));
    if (this.failed) { await this.worker.terminate(); return; }
    this.failed = new Error('the store writer is closed');
    await new Promise<void>((r) => {
      this.worker.once('exit', () => r());
      this.worker.postMessage({ id: 0, method: 'close', args: [] });
    });
  }
}
