// The worker_threads pool that runs the core's analysis. Region affinity: a region is given to
// one worker on first use and stays there, so its state lives in one place. The pool remembers
// which frame each region's worker state follows; when that is not the frame before the one to
// analyse (first use, restart, rewind, a worker that died), it asks the worker to rebuild the
// state from the last processed frame first.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { WorkerReply, WorkerRequest } from './computeMessages.js';

/** The compiled worker beside this module; from the TypeScript sources (tests) use dist/. */
export function computeWorkerUrl(): URL {
  const here = new URL('./computeWorker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  const dist = new URL('../dist/server/computeWorker.js', import.meta.url);
  if (existsSync(fileURLToPath(dist))) return dist;
  throw new Error(`the compiled compute worker is missing (${fileURLToPath(here)}); run \`npm run build\``);
}

interface Slot {
  worker: Worker;
  pending: Map<number, { resolve: (r: WorkerReply) => void; reject: (e: Error) => void; region: string }>;
  regions: Set<string>;
}

export interface AnalyseJob {
  readonly region: string;
  readonly frameId: number;
  readonly framePath: string;
  /** The frame processed before this one (undefined: none). */
  readonly previous?: { readonly id: number; readonly path: string };
  readonly settings: Record<string, unknown>;
  readonly mapsPath: string;
}

export class ComputePool {
  private readonly slots: Slot[] = [];
  private readonly affinity = new Map<string, number>();
  /** Frame id each region's worker state follows. */
  private readonly position = new Map<string, number | null>();
  private nextId = 1;
  private closed = false;
  private readonly url: URL;
  busy = 0;

  constructor(size: number, private readonly log: (line: string) => void = () => undefined) {
    this.url = computeWorkerUrl();
    for (let i = 0; i < Math.max(1, size); i++) this.slots.push(this.spawn(i));
  }

  private spawn(index: number): Slot {
    const slot: Slot = { worker: new Worker(this.url), pending: new Map(), regions: this.slots[index]?.regions ?? new Set() };
    slot.worker.on('message', (reply: WorkerReply) => {
      const p = slot.pending.get(reply.id);
      if (!p) return;
      slot.pending.delete(reply.id);
      p.resolve(reply);
    });
    const fail = (why: string) => {
      if (this.closed) return;
      for (const r of slot.regions) this.position.delete(r);
      for (const [, p] of slot.pending) p.reject(new Error(`compute worker stopped: ${why}`));
      slot.pending.clear();
      this.log(`compute worker ${index} stopped (${why}); starting a new one`);
      this.slots[index] = this.spawn(index);
    };
    slot.worker.on('error', (e) => fail(e.message));
    slot.worker.on('exit', (code) => { if (!this.closed) fail(`exit code ${code}`); });
    return slot;
  }

  private slotFor(region: string): number {
    let i = this.affinity.get(region);
    if (i === undefined) {
      i = 0;
      for (let k = 1; k < this.slots.length; k++) if (this.slots[k].regions.size < this.slots[i].regions.size) i = k;
      this.affinity.set(region, i);
      this.slots[i].regions.add(region);
    }
    return i;
  }

  /** Forget where a region's worker state is (after a rewind). */
  forget(region: string): void {
    this.position.delete(region);
  }

  async analyse(job: AnalyseJob): Promise<WorkerReply> {
    if (this.closed) throw new Error('compute pool is closed');
    const index = this.slotFor(job.region);
    const slot = this.slots[index];
    const expected = job.previous?.id ?? null;
    const at = this.position.get(job.region);
    const prime = at === expected ? undefined : (job.previous ? job.previous.path : 'reset');
    const req: WorkerRequest = {
      id: this.nextId++, region: job.region, framePath: job.framePath, settings: job.settings, mapsPath: job.mapsPath,
      ...(prime !== undefined && { prime }),
    };
    this.position.delete(job.region);
    this.busy++;
    try {
      const reply = await new Promise<WorkerReply>((resolve, reject) => {
        slot.pending.set(req.id, { resolve, reject, region: job.region });
        slot.worker.postMessage(req);
      });
      if (reply.ok) this.position.set(job.region, job.frameId);
      return reply;
    } finally {
      this.busy--;
    }
  }

  async close(): Promise<void> {
    this.closed = true;
    await Promise.all(this.slots.map((s) => s.worker.terminate()));
  }
}
