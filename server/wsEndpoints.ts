// The WebSocket endpoints of docs/api.md: /ws/view (snapshot, backfill, live updates) and
// /ws/ingest (one frame per message, each answered with an ack or a refusal).
import type { IncomingMessage, Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer } from 'ws';
import type { RawData, WebSocket } from 'ws';
import { InputError } from '../core/inputError.js';
import { parseIsoTime } from '../core/frameJson.js';
import { isLoopback, tokenMatches } from './auth.js';
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
  readonly snapshot: (region: string) => unknown;
}

function reject(socket: Duplex, status: number, text: string): void {
  const body = JSON.stringify({ error: text, field: '(request)', problem: text });
  socket.write(`HTTP/1.1 ${status} ${status === 401 ? 'Unauthorized' : status === 404 ? 'Not Found' : 'Bad Request'}\r\n` +
    `Content-Type: application/json\r\nContent-Length: ${Buffer.byteLength(body)}\r\nConnection: close\r\n\r\n${body}`);
  socket.destroy();
}

export function attachWebSockets(server: Server, ctx: WsContext): WebSocketServer[] {
  const view = new WebSocketServer({ noServer: true, maxPayload: 64 * 1024 });
  const ingest = new WebSocketServer({ noServer: true, maxPayload: ctx.bodyLimit });

  server.on('upgrade', (req: IncomingMessage, socket: Duplex, head: Buffer) => {
    const url = new URL(req.url ?? '/', 'http://localhost');
    let region: string;
    try {
      region = checkRegionName(url.searchParams.get('region'), 'query');
    } catch (e) {
      return reject(socket, 400, (e as InputError).message);
    }
    const auth = req.headers.authorization;
    const given = url.searchParams.get('token');
    if (url.pathname === '/ws/view') {
      const open = !ctx.readToken && isLoopback(req.socket.remoteAddress);
      if (!open && !tokenMatches(ctx.token, auth, given)) return reject(socket, 401, 'viewing needs the token');
      view.handleUpgrade(req, socket, head, (ws) => onViewer(ws, region));
    } else if (url.pathname === '/ws/ingest') {
      if (!tokenMatches(ctx.token, auth, given)) {
        void ctx.pipeline.refuse(region, 401, 'ws', 'authorization', 'ingest over WebSocket needs the token (Authorization header or ?token=)');
        return reject(socket, 401, 'ingest needs the token');
      }
      ingest.handleUpgrade(req, socket, head, (ws) => onIngest(ws, region));
    } else {
      reject(socket, 404, `no WebSocket endpoint at ${url.pathname}`);
    }
  });

  function onViewer(ws: WebSocket, region: string): void {
    ws.send(JSON.stringify(ctx.snapshot(region)));
    ctx.hub.add(region, ws);
    ws.on('message', (data: RawData) => {
      let msg: { type?: string; since?: unknown };
      try { msg = JSON.parse(data.toString()); } catch { return ws.send(JSON.stringify({ type: 'error', error: 'messages must be JSON' })); }
      if (msg.type === 'backfill') {
        try {
          const since = parseIsoTime(msg.since, 'since', 'backfill');
          ws.send(JSON.stringify({ type: 'backfill', samples: ctx.store.samples(region, since) }));
        } catch (e) {
          ws.send(JSON.stringify({ type: 'error', error: (e as Error).message }));
        }
      }
    });
    ws.on('error', () => ws.terminate());
  }

  function onIngest(ws: WebSocket, region: string): void {
    // Answers go back in the order the frames came.
    let chain = Promise.resolve();
    ws.on('message', (data: RawData, isBinary: boolean) => {
      const buf = Array.isArray(data) ? Buffer.concat(data) : Buffer.from(data as ArrayBuffer);
      const payload = { kind: isBinary ? 'fits' as const : 'json' as const, bytes: buf };
      const answer = ctx.pipeline.ingest({ region, payload, source: 'ws', mayCreate: true });
      chain = chain.then(async () => {
        const a = await answer;
        if (ws.readyState !== ws.OPEN) return;
        const b = a.body as Record<string, unknown>;
        if (a.status === 200 || a.status === 201) ws.send(JSON.stringify({ type: 'ack', status: b.status, frame_id: b.frame_id, time: b.time }));
        else ws.send(JSON.stringify({ type: 'refused', reason: b.error, field: b.field, code: a.status }));
      });
    });
    ws.on('error', (e: Error & { code?: string }) => {
      if (e.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH') {
        void ctx.pipeline.refuse(region, 413, 'ws', '(message)', `the message is larger than the limit of ${ctx.bodyLimit} bytes`);
      }
    });
  }

  return [view, ingest];
}
