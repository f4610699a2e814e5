// Finding and launching Debian's Chromium for the browser tests. Without Chromium the tests say so
// loudly and skip; with CI=true a missing Chromium is a failure.

import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

const CANDIDATES = [process.env.HELICORD_CHROMIUM, '/usr/bin/chromium', '/usr/bin/chromium-browser'].filter((p): p is string => Boolean(p));

export const chromiumPath: string | undefined = CANDIDATES.find((p) => existsSync(p));
export const inCi = process.env.CI === 'true';

export function announceMissingChromium(): void {
  const line = '!'.repeat(78);
  process.stderr.write(
    `\n${line}\n!! BROWSER TESTS SKIPPED: no Chromium found (looked at ${CANDIDATES.join(', ')}).\n` +
      `!! Install it with: apt-get install chromium   (or set HELICORD_CHROMIUM=/path/to/chromium)\n${line}\n\n`,
  );
}

export interface LaunchedBrowser {
  context: BrowserContext;
  close(): Promise<void>;
}

/** Headless Chromium with a fresh profile, no background traffic, a 1280x800 viewport. */
export async function launchChromium(executablePath: string): Promise<LaunchedBrowser> {
  const profile = mkdtempSync(join(tmpdir(), 'helicord-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath,
    headless: true,
    viewport: { width: 1280, height: 800 },
    acceptDownloads: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-dev-shm-usage'],
  });
  return {
    context,
    async close() {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** test-output/web/ under the project, created on demand. */
export function screenshotDir(root: string): string {
  const dir = join(root, 'test-output', 'web');
  mkdirSync(dir, { recursive: true });
  return dir;
}

/** Polls the page's probe (window.helicordProbe.state()) until `ok` holds; fails with the last state seen. */
export async function waitForProbe<P>(page: Page, what: string, ok: (p: P) => boolean, timeoutMs: number, stepMs: number): Promise<P> {
  const end = Date.now() + timeoutMs;
  let last: P | undefined;
  while (Date.now() < end) {
    last = (await page.evaluate('window.helicordProbe.state()')) as P;
    if (ok(last)) return last;
    await page.waitForTimeout(stepMs);
  }
  throw new Error(`timed out waiting for ${what}; page state: ${JSON.stringify(last)}`);
}
