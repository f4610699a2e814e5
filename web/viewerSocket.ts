// The live link to one region: the viewer WebSocket, reopened with back-off when it drops. After
// every reopen the page asks for a backfill since the newest sample it holds, so samples computed
// while it was away (a server restart, a dropped slow viewer) are merged in, not lost.

import { reconnectDelayMs } from './reconnect.js';
import { routes } from './routes.js';
import { parseViewerMessage, type ViewerMessage } from './wire.js';

import type { LinkState } from './pageStore.js';

export type { LinkState };

/** Close codes of the viewer socket after which there is nothing to reconnect to (docs/api.md). */
export const REGION_REMOVED = 4004;
export const REGION_RENAMED = 4005;

export interface ViewerLinkOptions {
  region: string;
  token?: string;
  onMessage(message: ViewerMessage): void;
  onState(state: LinkState, detail: { attempt: number; retryInMs?: number }): void;
  /** ISO time of the newest held sample, or undefined when the page holds none. */
  backfillSince(): string | undefined;
}

export class ViewerLink {
  private socket: WebSocket | undefined;
  private attempt = 0;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private stopped = false;
  /** How many times the link has opened; the first open needs no backfill (the snapshot covers it). */
  opens = 0;

  constructor(private readonly options: ViewerLinkOptions) {
    this.open();
  }

  private open(): void {
    if (this.stopped) return;
    this.options.onState(this.attempt === 0 && this.opens === 0 ? 'connecting' : 'reconnecting', { attempt: this.attempt });
    const scheme = location.protocol === 'https:' ? 'wss' : 'ws';
    let socket: WebSocket;
    try {
      socket = new WebSocket(`${scheme}://${location.host}${routes.viewerSocket(this.options.region, this.options.token)}`);
    } catch {
      this.retry();
      return;
    }
    this.socket = socket;
    socket.onopen = () => {
      this.attempt = 0;
      this.opens++;
      this.options.onState('live', { attempt: 0 });
      const since = this.options.backfillSince();
      if (this.opens > 1 && since !== undefined) this.send({ type: 'backfill', since });
    };
    socket.onmessage = (ev: MessageEvent) => {
      if (typeof ev.data !== 'string') return;
      const message = parseViewerMessage(ev.data);
      if (message) this.options.onMessage(message);
    };
    socket.onclose = (ev: CloseEvent) => {
      if (this.socket === socket) this.socket = undefined;
      // The region was removed (4004) or renamed (4005): asking again would only get 404.
      if (ev.code === REGION_REMOVED || ev.code === REGION_RENAMED) {
        this.stopped = true;
        this.options.onState('closed', { attempt: 0 });
        return;
      }
      this.retry();
    };
    socket.onerror = () => {
      // onclose follows and schedules the retry.
    };
  }

  private retry(): void {
    if (this.stopped || this.timer !== undefined) return;
    const wait = reconnectDelayMs(this.attempt, Math.random());
    this.options.onState('reconnecting', { attempt: this.attempt, retryInMs: wait });
    this.attempt++;
    this.timer = setTimeout(() => {
      this.timer = undefined;
      this.open();
    }, wait);
  }

  send(message: unknown): void {
    if (this.socket && this.socket.readyState === WebSocket.OPEN) this.socket.send(JSON.stringify(message));
  }

  close(): void {
    this.stopped = true;
    if (this.timer !== undefined) clearTimeout(this.timer);
    this.timer = undefined;
    const s = this.socket;
    this.socket = undefined;
    if (s) {
      s.onclose = null;
      s.close();
    }
    this.options.onState('closed', { attempt: 0 });
  }
}
