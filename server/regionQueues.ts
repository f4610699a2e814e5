// The bound on each region's queue: frames arriving (not yet answered) plus frames stored and not
// yet processed. At the bound, senders are held back (503 with Retry-After, a paused socket, a
// watched folder that waits) until processing makes room; nothing is dropped.
//
//   const queues = new RegionQueues(16, (r) => store.unprocessedCount(r));
//   if (!queues.admit('ar1')) answer503(); else { ...; queues.release('ar1'); }

export class RegionQueues {
  /** Arrivals not yet answered, per region. */
  private readonly arriving = new Map<string, number>();
  /** Callers waiting for room in a region's queue. */
  private readonly roomWaiters = new Map<string, (() => void)[]>();
  /** The longest a region's queue has been since start (the health answer reports it). */
  peak = 0;
  private closed = false;

  constructor(readonly limit: number, private readonly storedUnprocessed: (region: string) => number) {}

  /** A region's queue: frames arriving plus frames stored and not yet processed. */
  length(region: string): number {
    return (this.arriving.get(region) ?? 0) + this.storedUnprocessed(region);
  }

  /** True when the region's queue is at its bound. */
  isFull(region: string): boolean {
    return this.length(region) >= this.limit;
  }

  /** Counts an arrival in (+1) or out (-1) of the region's queue. */
  count(region: string, d: number): void {
    const n = (this.arriving.get(region) ?? 0) + d;
    if (n > 0) this.arriving.set(region, n); else this.arriving.delete(region);
    if (d > 0) this.notePeak(region);
    else this.wake(region);
  }

  notePeak(region: string): void {
    this.peak = Math.max(this.peak, this.length(region));
  }

  /** Takes a place in the queue, or false at the bound (or once closed). */
  admit(region: string): boolean {
    if (this.closed || this.isFull(region)) return false;
    this.count(region, +1);
    return true;
  }

  /** Resolves once the region's queue is below its bound (or the queues close, or `stop()` says so). */
  async waitForRoom(region: string, stop: () => boolean = () => false): Promise<void> {
    while (!this.closed && !stop() && this.isFull(region)) {
      await new Promise<void>((r) => {
        const list = this.roomWaiters.get(region) ?? [];
        list.push(r);
        this.roomWaiters.set(region, list);
        // A deadline as well: `stop()` may change without any wake-up.
        setTimeout(r, 1000).unref();
      });
    }
  }

  /** Wakes the region's waiters when it has room (after a frame was processed or removed). */
  wake(region: string): void {
    const list = this.roomWaiters.get(region);
    if (!list || this.isFull(region)) return;
    this.roomWaiters.delete(region);
    for (const w of list) w();
  }

  /** No more admissions; every waiter is released. */
  close(): void {
    this.closed = true;
    for (const list of this.roomWaiters.values()) for (const w of list) w();
    this.roomWaiters.clear();
  }
}
