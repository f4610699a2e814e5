// A viewer that asks for backfills and never reads the answers: every write to it counts
// against its send buffer limit, so it is dropped (4008, then cut off) and the monitor's memory
// stays bounded. The monitor runs in its own process so that its memory is measured alone.
import { randomBytes } from 'node:crypto';
import { connect } from 'node:net';
import type { Socket } from 'node:net';
import { rmSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { TOKEN, circlingFrame, frameBody, getJson, irregularTimes, launchMonitor, postFrame, tempDir, until, waitIdle } from './support.js';

/** A client WebSocket frame (masked, as RFC 6455 requires of clients) holding `text`. */
function maskedTextFrame(text: string): Buffer {
  const payload = Buffer.from(text, 'utf8');
  const n = payload.length;
  const head = n < 126 ? Buffer.from([0x81, 0x80 | n]) : Buffer.from([0x81, 0x80 | 126, n >> 8, n & 255]);
  const mask = randomBytes(4);
  const body = Buffer.alloc(n);
  for (let i = 0; i < n; i++) body[i] = payload[i] ^ mask[i & 3];
  return Buffer.concat([head, mask, body]);
}

/** Opens /ws/view by hand and stops reading once the handshake is in: a viewer that never reads. */
function stalledViewer(url: string, region: string): Promise<Socket> {
  const u = new URL(url);
  return new Promise((resolve, reject) => {
    const s = connect(Number(u.port), u.hostname);
    let head = '';
    s.on('error', reject);
    s.on('data', function onData(d) {
      head += d.toString('latin1');
      if (head.includes('\r\n\r\n')) {
        s.off('data', onData);
        if (!head.startsWith('HTTP/1.1 101')) return reject(new Error(`upgrade refused: ${head.split('\r\n')[0]}`));
        s.pause();
        resolve(s);
      }
    });
    s.write(`GET /ws/view?region=${region} HTTP/1.1\r\nHost: ${u.host}\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n` +
      `Sec-WebSocket-Key: ${randomBytes(16).toString('base64')}\r\nSec-WebSocket-Version: 13\r\n\r\n`);
  });
}

describe('a viewer that stops reading', () => {
  it('is closed once its unread replies pass the limit, and the monitor\'s memory stays bounded', async () => {
    const dir = tempDir();
    const m = await launchMonitor(dir);
    try {
      await fetch(`${m.url}/api/regions/ar/settings`, { method: 'PUT', headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' }, body: '{"watchFolder": false}' });
      for (const t of irregularTimes(40)) expect((await postFrame(m.url, 'ar', frameBody(circlingFrame(t)))).status).toBe(201);
      await waitIdle(m.url);
      const oneReply = JSON.stringify((await getJson<{ samples: unknown[] }>(m.url, '/api/regions/ar/series')).samples).length;
      const baseline = m.rssMiB();

      const viewer = await stalledViewer(m.url, 'ar');
      // 8000 backfill requests, each answered by the whole series (about 40 samples): without the
      // limit some 8000 x oneReply bytes would pile up in the monitor.
      const ask = maskedTextFrame(JSON.stringify({ type: 'backfill', since: '2026-03-14T00:00:00Z' }));
      let peak = baseline;
      const sampler = setInterval(() => { peak = Math.max(peak, m.rssMiB()); }, 50);
      const healthMs: number[] = [];
      try {
        for (let i = 0; i < 8000 && !viewer.destroyed; i++) {
          if (!viewer.write(ask)) await new Promise((r) => viewer.once('drain', r));
          if (i % 1000 === 0) {
            const t = performance.now();
            await getJson(m.url, '/api/health');
            healthMs.push(performance.now() - t);
          }
        }
        await until('the monitor logs the viewer as dropped', 30_000, () => /viewer of ar dropped/.test(m.log()));
        // Its buffer is given back when it is cut off (a second after the close it does not read).
        await new Promise((r) => setTimeout(r, 1500));
        peak = Math.max(peak, m.rssMiB());
      } finally {
        clearInterval(sampler);
      }
      const after = m.rssMiB();
      // The client sees the connection end once it reads again.
      viewer.resume();
      await until('the viewer socket is closed by the monitor', 15_000, () => viewer.destroyed || viewer.readableEnded);
      expect(m.alive()).toBe(true);
      expect((await getJson<{ ok: boolean }>(m.url, '/api/health')).ok).toBe(true);
      const figures = { oneReplyKiB: Math.round(oneReply / 1024), baselineMiB: Math.round(baseline), peakMiB: Math.round(peak), afterMiB: Math.round(after), healthMaxMs: Math.round(Math.max(...healthMs)) };
      console.log(`slow viewer: ${JSON.stringify(figures)}`);
      // Without the limit the unread replies alone are 8000 x ~30 KiB = 240 MiB and more. With it,
      // the backlog is at most the 4 MiB limit plus one reply; what remains is the heap's slack.
      expect(peak - baseline).toBeLessThan(120);
    } finally {
      await m.stop();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
