// A fixed set of batch workers (one per core by default). Each request goes to one worker and
// resolves when it says 'done'; a worker that fails or dies rejects its request with the reason.

import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { WorkerReply, WorkerRequest } from './batchWorker.js';

/**
 * The compiled worker script: beside this module when it runs from dist/, or in dist/ when this
 * module runs from the TypeScript sources (tests): `npm run build` makes it.
 */
export function batchWorkerUrl(): URL {
  const candidates = [new URL('./batchWorker.js', import.meta.url), new URL('../dist/replay/batchWorker.js', import.meta.url)];
  const found = candidates.find((u) => existsSync(fileURLToPath(u)));
  if (!found) {
    throw new Error(`the compiled batch worker is missing (looked for ${candidates.map((u) => fileURLToPath(u)).join(' and ')}): run \`npm run build\``);
  }
  return found;
}

export interface WorkerPool {
  readonly size: number;
  /** Sends `request` to worker `w`; `onReply` sees every message before 'done'. */
  run(w: number, request: WorkerRequest, onReply: (r: WorkerReply) => void): Promise<void>;
  close(): Promise<void>;
}

/**
 * Young-generation limit of a batch worker, MiB. A frame makes many large typed arrays that die
 * young; with V8's default young generation (tens of MiB) a worker holds 50-100 MiB of them
 * awaiting collection, which put `process` at 512^2 on 2 workers near 500 MiB peak RSS. A small
 * young generation collects them sooner (docs/speed.md, figures there).
 */
export const WORKER_YOUNG_GENERATION_MB = 8;

export function startWorkerPool(size: number, youngGenerationMb = WORKER_YOUNG_GENERATION_MB): WorkerPool {
  const url = batchWorkerUrl();
  const workers = Array.from({ length: size }, () => new Worker(url, { resourceLimits: { maxYoungGenerationSizeMb: youngGenerationMb } }));
  const busy: (((e: Error) => void) | undefined)[] = new Array(size);
  workers.forEach((worker, w) => {
    worker.on('error', (e) => busy[w]?.(e));
    worker.on('exit', (code) => busy[w]?.(new Error(`batch worker ${w} stopped (exit code ${code})`)));
  });
  return {
    size,
    run(w, request, onReply) {
      const worker = workers[w];
      return new Promise<void>((resolve, reject) => {
        const finish = (e?: Error) => {
          worker.off('message', onMessage);
          busy[w] = undefined;
          if (e) reject(e); else resolve();
        };
        const onMessage = (r: WorkerReply) => {
          if (r.kind === 'done') finish();
          else if (r.kind === 'failed') finish(new Error(`batch worker ${w}: ${r.message}`));
          else {
            try { onReply(r); } catch (e) { finish(e as Error); }
          }
        };
        busy[w] = finish;
        worker.on('message', onMessage);
        worker.postMessage(request);
      });
    },
    async close() {
      busy.fill(undefined);
      await Promise.all(workers.map((w) => w.terminate()));
    },
  };
}
