// Viewer sockets per region. Live messages go to every viewer whose send buffer is below the
// limit; a viewer that falls further behind is dropped (closed with 4008) rather than letting
// its backlog grow or hold up ingest. It can reconnect and gets a fresh snapshot.
import type { WebSocket } from 'ws';

export class ViewerHub {
  private readonly viewers = new Map<string, Set<WebSocket>>();
  dropped = 0;

  constructor(
    private readonly snapshot: (region: string) => unknown,
    private readonly maxBufferedBytes = 4 * 1024 * 1024,
    private readonly log: (line: string) => void = () => undefined,
  ) {}

  add(region: string, ws: WebSocket): void {
    let set = this.viewers.get(region);
    if (!set) { set = new Set(); this.viewers.set(region, set); }
    set.add(ws);
    ws.on('close', () => set!.delete(ws));
  }

  count(): number {
    let n = 0;
    for (const s of this.viewers.values()) n += s.size;
    return n;
  }

  send(region: string, message: unknown): void {
    const set = this.viewers.get(region);
    if (!set || set.size === 0) return;
    const data = JSON.stringify(message);
    for (const ws of set) this.deliver(region, ws, data);
  }

  private deliver(region: string, ws: WebSocket, data: string): void {
    if (ws.readyState !== ws.OPEN) return;
    if (ws.bufferedAmount > this.maxBufferedBytes) {
      this.dropped++;
      this.viewers.get(region)?.delete(ws);
      this.log(`viewer of ${region} dropped: ${ws.bufferedAmount} bytes not yet sent`);
      ws.close(4008, 'too slow: dropped from live updates; reconnect for a snapshot');
      setTimeout(() => ws.terminate(), 1000).unref();
      return;
    }
    ws.send(data);
  }

  resync(region: string): void {
    const set = this.viewers.get(region);
    if (!set || set.size === 0) return;
    const data = JSON.stringify(this.snapshot(region));
    for (const ws of set) this.deliver(region, ws, data);
  }

  closeAll(): void {
    for (const set of this.viewers.values()) for (const ws of set) ws.terminate();
    this.viewers.clear();
  }
}
