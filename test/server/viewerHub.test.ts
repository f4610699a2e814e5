// A slow viewer is dropped rather than buffered without bound; the others keep getting messages.
import { EventEmitter } from 'node:events';
import { describe, expect, it } from 'vitest';
import type { WebSocket } from 'ws';
import { ViewerHub } from '../../server/viewerHub.js';

class FakeSocket extends EventEmitter {
  readonly OPEN = 1;
  readyState = 1;
  bufferedAmount = 0;
  sent: string[] = [];
  closedWith?: number;
  send(data: string) { this.sent.push(data); }
  close(code: number) { this.closedWith = code; this.readyState = 3; this.emit('close'); }
  terminate() { this.readyState = 3; }
}

describe('viewer hub', () => {
  it('drops a viewer whose send buffer is over the limit and keeps serving the rest', () => {
    const hub = new ViewerHub(() => ({ type: 'snapshot' }), 1000);
    const fast = new FakeSocket(), slow = new FakeSocket();
    hub.add('ar', fast as unknown as WebSocket);
    hub.add('ar', slow as unknown as WebSocket);
    hub.send('ar', { type: 'sample', n: 1 });
    expect(slow.sent).toHaveLength(1);
    slow.bufferedAmount = 5000; // not reading: the buffer grows
    hub.send('ar', { type: 'sample', n: 2 });
    hub.send('ar', { type: 'sample', n: 3 });
    expect(slow.closedWith).toBe(4008);
    expect(slow.sent).toHaveLength(1);
    expect(fast.sent.map((s) => JSON.parse(s).n)).toEqual([1, 2, 3]);
    expect(hub.count()).toBe(1);
    expect(hub.dropped).toBe(1);
    hub.resync('ar');
    expect(JSON.parse(fast.sent.at(-1)!).type).toBe('snapshot');
  });
});
