// Serves the built dashboard (dist/web: index.html, app.js, app.css and app.js's source map) under
// the mount point, and nothing else from that folder (tsc also writes modules there). The page
// loads nothing from outside: the Content-Security-Policy allows only this origin.

import { Router, type Request, type Response } from 'express';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';

const FILES: Record<string, string> = {
  'index.html': 'text/html; charset=utf-8',
  'app.js': 'text/javascript; charset=utf-8',
  'app.css': 'text/css; charset=utf-8',
  'app.js.map': 'application/json; charset=utf-8',
  'app.js.LEGAL.txt': 'text/plain; charset=utf-8',
};

/** Page responses carry this policy: scripts, styles, images and sockets of this origin only. */
export const PAGE_CONTENT_SECURITY_POLICY =
  "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data: blob:; connect-src 'self'; " +
  "font-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors 'none'; form-action 'self'";

/** Express router serving the page built by `node web/build.mjs` from distWebDir (e.g. dist/web). */
export function pageRouter(distWebDir: string): Router {
  const dir = resolve(distWebDir);
  const router = Router();
  const send = (name: string) => (_req: Request, res: Response): void => {
    const file = join(dir, name);
    if (!existsSync(file)) {
      res.status(503).type('text/plain').send(`helicord: the page is not built (${file} is missing). Run \`node web/build.mjs\`.\n`);
      return;
    }
    res.setHeader('Content-Type', FILES[name]);
    res.setHeader('Content-Security-Policy', PAGE_CONTENT_SECURITY_POLICY);
    res.setHeader('X-Content-Type-Options', 'nosniff');
    // The page is small and rebuilt with the program: always revalidate (ETag from express).
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(file, { dotfiles: 'deny', headers: { 'Content-Type': FILES[name] } });
  };
  router.get('/', send('index.html'));
  router.get('/index.html', send('index.html'));
  for (const name of Object.keys(FILES)) if (name !== 'index.html') router.get(`/${name}`, send(name));
  return router;
}
