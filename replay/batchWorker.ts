// The worker thread of a batch run: it scans files (reads and describes them) and analyses
// contiguous chunks of the ordered archive, posting one message per frame (and the footpoints of
// each primer frame, for the merge). It is loaded from the compiled dist/ JavaScript by
// workerPool.ts.

import { parentPort } from 'node:worker_threads';
import type { ChunkJob, FrameOutcome } from './analyseChunk.js';
import { analyseChunk } from './analyseChunk.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { scanOne } from './archiveSource.js';
import type { FileScan } from './archiveSource.js';
import { mapWriterFor } from './mapFiles.js';
import type { PrimerTable } from './chunkSeams.js';

export type WorkerRequest =
  | { readonly kind: 'scan'; readonly files: readonly string[]; readonly components?: FrameAssemblySettings }
  | {
    readonly kind: 'analyse'; readonly jobs: readonly ChunkJob[]; readonly warmup: number; readonly settings?: unknown;
    readonly components?: FrameAssemblySettings; readonly mapsDir?: string;
  };

export type WorkerReply =
  | { readonly kind: 'scanned'; readonly result: FileScan }
  | { readonly kind: 'frame'; readonly outcome: FrameOutcome }
  | { readonly kind: 'primer'; readonly table: PrimerTable }
  | { readonly kind: 'done' }
  | { readonly kind: 'failed'; readonly message: string };

const port = parentPort;
if (port) {
  // One kernel cache for the worker's life: every frame of an archive shares its grid.
  const cache = new Map();
  port.on('message', (req: WorkerRequest) => {
    const reply = (r: WorkerReply) => port.postMessage(r);
    const run = async () => {
      if (req.kind === 'scan') {
        for (const f of req.files) reply({ kind: 'scanned', result: await scanOne(f, req.components) });
      } else {
        await analyseChunk(req.jobs, req.warmup, (outcome) => reply({ kind: 'frame', outcome }), {
          settings: req.settings, cache, onPrimer: (table) => reply({ kind: 'primer', table }),
          ...(req.components !== undefined && { components: req.components }),
          ...(req.mapsDir !== undefined && { writeMaps: mapWriterFor(req.mapsDir) }),
        });
      }
      reply({ kind: 'done' });
    };
    run().catch((e: unknown) => reply({ kind: 'failed', message: e instanceof Error ? e.stack ?? e.message : String(e) }));
  });
}
