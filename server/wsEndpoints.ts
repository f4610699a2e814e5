// The WebSocket endpoints of docs/api.md: /ws/view (snapshot, backfill, live updates) and
// /ws/ingest (one frame per message, each answered with an ack or a refusal).
// Every write to a viewer goes through the hub's limit (a viewer that does not read is dropped);
// an ingest socket is paused while its region's queue is at its bound. Nothing here may throw
// out of an event handler: a failure is answered or logged.
import type { SnapshotMessage } from '../core/wire/viewerMessages.js';
import type { IncomingMessage, Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer } from 'ws';
import type { RawData, WebSocket } from 'ws';
import type { InputError } from '../core/inputError.js';
import { parseIsoTime } from '../core/frameJson.js';
import { isLoopback, tokenMatches } from './auth.js';
import type { HostPolicy } from './hostCheck.js';
import { hostAllowed, originAllowed } from './hostCheck.js';
import type { Pipeline } from './pipeline.js';
import { checkRegionName } from './regionName.js';
import type { Store } from './store.js';
import type { ViewerHub } from './viewerHub.js';

export interface WsContext {
  readonly store: Store;
  readonly pipeline: Pipeline;
  readonly hub: ViewerHub;
  readonly token: string;
  readonly readToken: boolean;
  readonly bodyLimit: number;
  readonly snapshot: (region: string) => SnapshotMessage;
  readonly hosts: HostPolicy;
  readonly log?: (line: string) => void;
}

/** Samples in one backfill reply; a reply with `more: true` is followed by asking again from its last sample. */
export const BACKFILL_PAGE = 2000;

const REASONS: Record<number, string> = { 400: 'Bad Request', 401: 'Unauthorized', 403: 'Forbidden', 404: 'Not Found', 503: 'Service Unavailable' };

function reject(socket: Duplex, status: number, text: string, field = '(request)'): void {
  const body = JSON.stringify({ error: text, field, problem: text });
  try {
    socket.write(`HTTP/1.1 ${status} ${REASONS[status] ?? 'Bad Request'}\r\n` +
      `Content-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\nConnection: close\r\n\r\n${body}`);
  } catch { /* the socket is gone already */ }
  socket.destroy();
}

export function attachWebSockets(server: Server, ctx: WsContext): WebSocketServer[] {
  const view = new WebSocketServer({ noServer: true, maxPayload: 64 * 1024 });
  const ingest = new WebSocketServer({ noServer: true, maxPayload: ctx.bodyLimit });
  const log = ctx.log ?? (() => undefined);

  server.on('upgrade', (req: IncomingMessage, socket: Duplex, head: Buffer) => {
    socket.on('error', () => socket.destroy());
    try {
      upgrade(req, socket, head);
    } catch (e) {
      log(`WebSocket upgrade failed: ${(e as Error).message ?? e}`);
      socket.destroy();
    }
  });

  function upgrade(req: IncomingMessage, socket: Duplex, head: Buffer): void {
    // DNS rebinding and pages of other sites: the Host must name this monitor, and a browser's
    // Origin must be one of the monitor's own (server/hostCheck.ts).
    if (!hostAllowed(ctx.hosts, req.headers.host)) return reject(socket, 403, 'this monitor does not answer to that host name', 'host');
    if (!originAllowed(ctx.hosts, req.headers.origin)) return reject(socket, 403, 'WebSocket connections from pages of other origins are not accepted', 'origin');
    const url = new URL(req.url ?? '/', 'http://localhost');
    let region: string;
    try {
      region = checkRegionName(url.searchParams.get('region'), 'query');
    } catch (e) {
      return reject(socket, 400, (e as InputError).message, 'region');
    }
    const auth = req.headers.authorization;
    const given = url.searchParams.get('token');
    if (url.pathname === '/ws/view') {
      const open = !ctx.readToken && isLoopback(req.socket.remoteAddress);
      if (!open && !tokenMatches(ctx.token, auth, given)) {
        ctx.pipeline.noteUnauthorized(`viewer socket for ${region} from ${req.socket.remoteAddress ?? '?'}`);
        return reject(socket, 401, 'viewing needs the token');
      }
      // No socket held open for a region that does not exist: the page asks again once it does.
      if (!ctx.store.region(region)) return reject(socket, 404, `no region named "${region}"`, 'region');
      if (ctx.hub.full()) return reject(socket, 503, `too many viewers (${ctx.hub.maxViewers}); try again later`);
      view.handleUpgrade(req, socket, head, (ws) => onViewer(ws, region));
    } else if (url.pathname === '/ws/ingest') {
      if (!tokenMatches(ctx.token, auth, given)) {
        // Nothing is stored for a request without the token (counted in memory only).
        ctx.pipeline.noteUnauthorized(`ingest socket for ${region} from ${req.socket.remoteAddress ?? '?'}`);
        return reject(socket, 401, 'ingest needs the token');
      }
      ingest.handleUpgrade(req, socket, head, (ws) => onIngest(ws, region));
    } else {
      reject(socket, 404, `no WebSocket endpoint at ${url.pathname.slice(0, 80)}`);
    }
  }

  function onViewer(ws: WebSocket, region: string): void {
    ws.on('error', () => ws.terminate());
    try {
      ctx.hub.add(region, ws);
      ctx.hub.sendTo(region, ws, ctx.snapshot(region));
    } catch (e) {
      log(`viewer of ${region}: the snapshot failed: ${(e as Error).message ?? e}`);
      ws.terminate();
      return;
    }
    ws.on('message', (data: RawData) => {
      // Every reply is counted against the viewer's buffer: one that asks without reading is dropped.
      try {
        let msg: { type?: unknown; since?: unknown };
        try { msg = JSON.parse(data.toString()); } catch { return void ctx.hub.sendTo(region, ws, { type: 'error', error: 'messages must be JSON' }); }
        if (msg === null || typeof msg !== 'object') return void ctx.hub.sendTo(region, ws, { type: 'error', error: 'messages must be JSON objects' });
        if (msg.type !== 'backfill') return void ctx.hub.sendTo(region, ws, { type: 'error', error: 'the only message a viewer sends is { "type": "backfill", "since": ISO time }' });
        let since: number;
        try {
          since = parseIsoTime(msg.since, 'since', 'backfill');
        } catch (e) {
          return void ctx.hub.sendTo(region, ws, { type: 'error', error: (e as Error).message });
        }
        // A viewer already over its limit is dropped before the samples are even read.
        if (!ctx.hub.writable(region, ws)) return;
        const samples = ctx.store.samples(region, since, Number.MAX_SAFE_INTEGER, BACKFILL_PAGE + 1);
        const more = samples.length > BACKFILL_PAGE;
        ctx.hub.sendTo(region, ws, { type: 'backfill', samples: more ? samples.slice(0, BACKFILL_PAGE) : samples, more });
      } catch (e) {
        log(`viewer of ${region}: a message failed: ${(e as Error).message ?? e}`);
      }
    });
  }

  function onIngest(ws: WebSocket, region: string): void {
    // Answers go back in the order the frames came.
    let chain = Promise.resolve();
    let held = false;
    const send = (message: unknown) => {
      if (ws.readyState === ws.OPEN) ws.send(JSON.stringify(message));
    };
    ws.on('message', (data: RawData, isBinary: boolean) => {
      const buf = Array.isArray(data) ? Buffer.concat(data) : Buffer.from(data as ArrayBuffer);
      const payload = { kind: isBinary ? 'fits' as const : 'json' as const, bytes: buf };
      const answer = ctx.pipeline.ingest({ region, payload, source: 'ws', mayCreate: true });
      // Backpressure: past the region's queue bound, stop reading this socket until there is room.
      if (!held && ctx.pipeline.queueFull(region)) {
        held = true;
        ws.pause();
        void ctx.pipeline.waitForRoom(region).then(() => { held = false; if (ws.readyState === ws.OPEN) ws.resume(); });
      }
      chain = chain.then(async () => {
        const a = await answer;
        const b = a.body as Record<string, unknown>;
        if (a.status === 200 || a.status === 201) send({ type: 'ack', status: b.status, frame_id: b.frame_id, time: b.time });
        else send({ type: 'refused', reason: b.error, field: b.field, code: a.status });
      }).catch((e: unknown) => log(`ingest socket of ${region}: an answer failed: ${(e as Error).message ?? e}`));
    });
    ws.on('error', (e: Error & { code?: string }) => {
      if (e.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH') {
        void ctx.pipeline.refuse(region, 413, 'ws', '(message)', `the message is larger than the limit of ${ctx.bodyLimit} bytes`);
      }
    });
  }

  return [view, ingest];
}
