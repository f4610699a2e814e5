// The worker_threads pool that runs the core's analysis. Region affinity: a region is given to
// one worker on first use and stays there, so its state lives in one place. The pool remembers
// which frame each region's worker state follows; when that is not the frame before the one to
// analyse (first use, restart, rewind, a worker that died), it asks the worker to rebuild the
// state from the last processed frame first.
import type { WarmUpNotice, WorkerReply, WorkerRequest, WorkerSetup } from './computeMessages.js';
import { RestartingWorker, compiledWorkerUrl } from './restartingWorker.js';

/** The compiled compute worker. */
export function computeWorkerUrl(): URL {
  return compiledWorkerUrl('computeWorker.js');
}

interface Slot {
  worker: RestartingWorker<WorkerRequest, WorkerReply | WarmUpNotice>;
  regions: Set<string>;
}

export interface AnalyseJob {
  readonly region: string;
  readonly frameId: number;
  readonly framePath: string;
  /**
   * The frame processed before this one (undefined: none), with what rebuilds the state after it:
   * the frames within the motion baseline up to it (paths, oldest first) and its stored memory.
   */
  readonly previous?: { readonly id: number; readonly frames: () => { readonly frames: readonly string[]; readonly memory?: unknown } };
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
  /** Workers still in their warm-up (server/analysisWarmUp.ts). */
  private readonly warming = new Set<number>();

  /**
   * `assist`: each worker runs a frame's independent parts on a second thread (server/
   * frameAssistant.ts). `warmUp`: each worker, and each replacement of one that died, analyses a
   * short synthetic sequence before its first frame (server/analysisWarmUp.ts).
   */
  constructor(
    size: number, private readonly log: (line: string) => void = () => undefined, private readonly assist = false,
    private readonly warmUp = false,
  ) {
    this.url = computeWorkerUrl();
    for (let i = 0; i < Math.max(1, size); i++) this.slots.push(this.spawn(i));
  }

  private spawn(index: number): Slot {
    const regions = new Set<string>();
    // A worker that died loses the states of its regions: they are rebuilt on their next frame.
    const setup: WorkerSetup = { warmUp: this.warmUp, assist: this.assist };
    if (this.warmUp) this.warming.add(index);
    const worker = new RestartingWorker<WorkerRequest, WorkerReply | WarmUpNotice>(this.url, `compute worker ${index}`, this.log, () => {
      for (const r of regions) this.position.delete(r);
      if (this.warmUp) this.warming.add(index);
    }, {
      workerData: setup,
      onNotice: (notice) => {
        if (!('warmedUp' in notice)) return;
        this.warming.delete(index);
        const { frames, of, ms } = notice.warmedUp;
        this.log(frames === of
          ? `compute worker ${index}: warmed up on ${frames} synthetic frames in ${(ms / 1000).toFixed(1)} s`
          : `compute worker ${index}: warm-up ended after ${frames} of ${of} synthetic frames (${(ms / 1000).toFixed(1)} s): a frame came first`);
      },
    });
    return { worker, regions };
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

  /** Compute workers still warming up (a replacement of a dead worker warms up again). */
  get warmingUp(): number {
    return this.warming.size;
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
    const prime = at === expected ? undefined : (job.previous ? job.previous.frames() : 'reset');
    const req: WorkerRequest = {
      id: this.nextId++, region: job.region, framePath: job.framePath, settings: job.settings, mapsPath: job.mapsPath,
      ...(prime !== undefined && { prime }),
    };
    this.position.delete(job.region);
    this.busy++;
    try {
      // Notices (id 0) answer no request: a request's reply is a WorkerReply.
      const reply = await slot.worker.request(req) as WorkerReply;
      if (reply.ok) this.position.set(job.region, job.frameId);
      return reply;
    } finally {
      this.busy--;
    }
  }

  async close(): Promise<void> {
    this.closed = true;
    await Promise.all(this.slots.map((s) => s.worker.close()));
  }
}
