// Viewer sockets per region. Every write to a viewer (the snapshot, live messages, backfill
// replies, error replies) goes through `sendTo`, which counts it against the viewer's send
// buffer: a viewer whose buffer passes the limit is dropped (closed with 4008, and cut off a
// second later if it does not take the close) rather than letting its backlog grow or hold up
// ingest. It can reconnect and gets a fresh snapshot. The number of viewers is bounded too.
import type { WebSocket } from 'ws';

export class ViewerHub {
  private readonly viewers = new Map<string, Set<WebSocket>>();
  /** Viewers being dropped: nothing more is written to them. */
  private readonly dropping = new WeakSet<WebSocket>();
  dropped = 0;

  constructor(
    private readonly snapshot: (region: string) => unknown,
    private readonly maxBufferedBytes = 4 * 1024 * 1024,
    private readonly log: (line: string) => void = () => undefined,
    /** Viewer sockets open at once, all regions together. */
    readonly maxViewers = 1000,
  ) {}

  add(region: string, ws: WebSocket): void {
    let set = this.viewers.get(region);
    if (!set) { set = new Set(); this.viewers.set(region, set); }
    set.add(ws);
    ws.on('close', () => {
      set!.delete(ws);
      if (set!.size === 0 && this.viewers.get(region) === set) this.viewers.delete(region);
    });
  }

  count(): number {
    let n = 0;
    for (const s of this.viewers.values()) n += s.size;
    return n;
  }

  /** True when another viewer would pass the bound. */
  full(): boolean {
    return this.count() >= this.maxViewers;
  }

  send(region: string, message: unknown): void {
    const set = this.viewers.get(region);
    if (!set || set.size === 0) return;
    const data = JSON.stringify(message);
    for (const ws of set) this.deliver(region, ws, data);
  }

  /** True when the viewer may be written to; a viewer over its limit is dropped here. */
  writable(region: string, ws: WebSocket): boolean {
    if (ws.readyState !== ws.OPEN || this.dropping.has(ws)) return false;
    if (ws.bufferedAmount > this.maxBufferedBytes) { this.drop(region, ws); return false; }
    return true;
  }

  /** Writes one message to one viewer, counted against its limit; false when it was dropped. */
  sendTo(region: string, ws: WebSocket, message: unknown): boolean {
    // Checked before the message is built: a viewer already over its limit costs nothing more.
    if (!this.writable(region, ws)) return false;
    return this.deliver(region, ws, typeof message === 'string' ? message : JSON.stringify(message));
  }

  private deliver(region: string, ws: WebSocket, data: string): boolean {
    if (ws.readyState !== ws.OPEN || this.dropping.has(ws)) return false;
    if (ws.bufferedAmount > this.maxBufferedBytes) { this.drop(region, ws); return false; }
    ws.send(data);
    return true;
  }

  private drop(region: string, ws: WebSocket): void {
    this.dropped++;
    this.dropping.add(ws);
    this.viewers.get(region)?.delete(ws);
    this.log(`viewer of ${region} dropped: ${ws.bufferedAmount} bytes not yet sent`);
    ws.close(4008, 'too slow: dropped from live updates; reconnect for a snapshot');
    // A viewer that does not read does not take the close either: cut it off, freeing its buffer.
    setTimeout(() => ws.terminate(), 1000).unref();
  }

  resync(region: string): void {
    const set = this.viewers.get(region);
    if (!set || set.size === 0) return;
    const data = JSON.stringify(this.snapshot(region));
    for (const ws of set) this.deliver(region, ws, data);
  }

  /** Closes every viewer of a region that was removed or renamed (`reason` says which; at most 123 bytes). */
  closeRegion(region: string, code: number, reason: string): void {
    const set = this.viewers.get(region);
    if (!set) return;
    this.viewers.delete(region);
    for (const ws of set) {
      ws.close(code, reason);
      setTimeout(() => ws.terminate(), 1000).unref();
    }
  }

  closeAll(): void {
    for (const set of this.viewers.values()) for (const ws of set) ws.terminate();
    this.viewers.clear();
  }
}
