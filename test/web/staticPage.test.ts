import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import express from 'express';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PAGE_CONTENT_SECURITY_POLICY, pageRouter } from '../../server/staticPage.js';

describe('pageRouter', () => {
  let server: Server;
  let base = '';
  const built = mkdtempSync(join(tmpdir(), 'helicord-static-'));
  const empty = mkdtempSync(join(tmpdir(), 'helicord-static-empty-'));

  beforeAll(async () => {
    writeFileSync(join(built, 'index.html'), '<!doctype html><title>t</title>');
    writeFileSync(join(built, 'app.js'), 'console.log(1)');
    writeFileSync(join(built, 'app.css'), 'body{}');
    writeFileSync(join(built, 'decimate.js'), 'export {}'); // what tsc leaves beside the bundle
    const app = express();
    app.use('/', pageRouter(built));
    app.use('/unbuilt', pageRouter(empty));
    app.use((_req, res) => void res.status(404).send('none'));
    server = createServer(app);
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
    base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  });

  afterAll(async () => {
    await new Promise<void>((r) => server.close(() => r()));
    rmSync(built, { recursive: true, force: true });
    rmSync(empty, { recursive: true, force: true });
  });

  it('serves the page files with their types and the same-origin policy', async () => {
    const page = await fetch(base + '/');
    expect(page.status).toBe(200);
    expect(page.headers.get('content-type')).toMatch(/^text\/html/);
    expect(page.headers.get('content-security-policy')).toBe(PAGE_CONTENT_SECURITY_POLICY);
    expect(await page.text()).toContain('<title>t</title>');
    const js = await fetch(base + '/app.js');
    expect(js.headers.get('content-type')).toMatch(/^text\/javascript/);
    expect((await fetch(base + '/app.css')).headers.get('content-type')).toMatch(/^text\/css/);
  });

  it('serves nothing else from the folder', async () => {
    expect((await fetch(base + '/decimate.js')).status).toBe(404);
    expect((await fetch(base + '/../package.json')).status).toBe(404);
  });

  it('says how to build when the page is missing', async () => {
    const r = await fetch(base + '/unbuilt/');
    expect(r.status).toBe(503);
    expect(await r.text()).toMatch(/node web\/build\.mjs/);
  });
});
