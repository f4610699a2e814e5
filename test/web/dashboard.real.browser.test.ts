// Browser tests of the dashboard against the REAL monitor (dist/server/serve.js in a child process,
// with its built-in demo region streaming fast): the demo region loads, charts grow as frames are
// computed, alerts raised by the demo's scripted scenario reach the log and the charts with the
// thresholds the server's rules carry, the map shows the frame and a ledger row click highlights a
// footpoint (when the monitor's analysis reports footpoints), replay controls steer the demo, an
// alert is acknowledged, and the page recovers after the monitor is stopped and started again. The page is built into dist/web first (where serve()
// takes it from). Needs `npm run build` (npm test does it); without the compiled server the suite
// says so and skips, and under CI=true it fails.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { announceMissingChromium, chromiumPath, inCi, launchChromium, screenshotDir, type LaunchedBrowser, waitForProbe } from './support/browser.js';
import { freePort, RealMonitor, realMonitorAvailable, realServePath } from './support/realMonitor.js';
import { synth } from '../../replay/synthCommand.js';
import { writeFits } from '../../core/fits/writeImage.js';

/**
 * A FITS frame on a Carrington cylindrical-equal-area patch (CRLN-CEA / CRLT-CEA, FITS WCS paper II,
 * Calabretta & Greisen 2002), written by our writer: 48 x 40 pixels of 0.03 degree centred at
 * Carrington 121.25, -18.5 (rows 0.03 in CEA's y, (180/pi) sin(latitude) with PV2_1 = 1, as
 * remapped vector magnetograms have them), an invented bipole that turns a little from frame to
 * frame, with its velocities.
 */
function ceaFrame(k: number): Buffer {
  const NX = 48, NY = 40;
  const bn = new Float64Array(NX * NY), vx = new Float64Array(NX * NY), vy = new Float64Array(NX * NY);
  const a = 0.05 * k;
  for (let iy = 0; iy < NY; iy++) for (let ix = 0; ix < NX; ix++) {
    const [px, py] = [24 + 6 * Math.cos(a), 20 + 6 * Math.sin(a)];
    const [nx, ny] = [24 - 6 * Math.cos(a), 20 - 6 * Math.sin(a)];
    bn[iy * NX + ix] = 1200 * Math.exp(-((ix - px) ** 2 + (iy - py) ** 2) / 18) - 1100 * Math.exp(-((ix - nx) ** 2 + (iy - ny) ** 2) / 18);
    vx[iy * NX + ix] = -0.2 * (iy - 20) / 20;
    vy[iy * NX + ix] = 0.2 * (ix - 24) / 24;
  }
  const wcs = { ctype: ['CRLN-CEA', 'CRLT-CEA'] as [string, string], cunit: ['deg', 'deg'] as [string, string], cdelt: [0.03, 0.03] as [number, number], crpix: [24.5, 20.5] as [number, number], crval: [121.25, -18.5] as [number, number], pv: { PV2_1: 1 } };
  return Buffer.from(writeFits({
    primary: [{ key: 'DATE-OBS', value: new Date(Date.UTC(2026, 2, 14, 6) + k * 720_000).toISOString().slice(0, 23) }, { key: 'TIMESYS', value: 'UTC' }, { key: 'RSUN_REF', value: 696e6 }],
    images: [
      { name: 'BN', nx: NX, ny: NY, values: bn, bunit: 'G', wcs },
      { name: 'VX', nx: NX, ny: NY, values: vx, bunit: 'km/s', wcs },
      { name: 'VY', nx: NX, ny: NY, values: vy, bunit: 'km/s', wcs },
    ],
  }));
}

const root = fileURLToPath(new URL('../..', import.meta.url));
const haveServer = realMonitorAvailable(root);

type Probe = {
  region?: string; samples: number; link: string; linkOpens: number; mapFrame: string | number | null; follow: boolean; selectedFootpoint: string | null;
  alerts: { id: string; rule: string; state: string }[];
  map: { footpoints: number; rasterMs: number; highlighted: string | null };
  rateChart: { markers: number; points: number; boxesApart: boolean };
  budgetChart: { markers: number; points: number; thresholds: number[]; boxesApart: boolean };
  gapFactor: number | null;
  braidChart: { fetched: string; window: number; xRange: [number, number]; xTicks: string[]; labels: string[] };
};
const probe = (page: Page): Promise<Probe> => page.evaluate('window.helicordProbe.state()') as Promise<Probe>;

const until = (page: Page, what: string, ok: (p: Probe) => boolean, timeoutMs = 20_000): Promise<Probe> =>
  waitForProbe<Probe>(page, what, ok, timeoutMs, 100);

if (!chromiumPath && !inCi) announceMissingChromium();
if (!haveServer && !inCi) {
  process.stderr.write(`\n!! REAL-MONITOR BROWSER TESTS SKIPPED: ${realServePath(root)} is missing (run npm run build).\n\n`);
}


/** Builds the page into dist/web (where serve() looks), starts Chromium with a page whose errors go into `problems`. */
async function pageWithErrorLog(problems: string[]): Promise<{ browser: LaunchedBrowser; page: Page }> {
  if (!chromiumPath) throw new Error('CI=true but no Chromium found: the browser tests must run in CI (apt-get install chromium)');
  if (!haveServer) throw new Error(`CI=true but ${realServePath(root)} is missing: build first`);
  const { buildPage } = await import('../../web/build.mjs');
  await buildPage();
  const browser = await launchChromium(chromiumPath);
  const page = await browser.context.newPage();
  page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error' && !m.text().startsWith('Failed to load resource') && !/WebSocket/.test(m.text())) problems.push(m.text());
  });
  return { browser, page };
}

describe.skipIf((!chromiumPath || !haveServer) && !inCi)('dashboard in Chromium against the real monitor (demo region)', () => {
  let browser: LaunchedBrowser;
  let page: Page;
  let monitor: RealMonitor;
  let dataDir: string;
  const shots = screenshotDir(root);
  const problems: string[] = [];

  beforeAll(async () => {
    ({ browser, page } = await pageWithErrorLog(problems));
    dataDir = mkdtempSync(join(tmpdir(), 'helicord-real-'));
    monitor = new RealMonitor(root, dataDir, await freePort());
    await monitor.start();
  }, 60_000);

  afterAll(async () => {
    await browser?.close();
    await monitor?.stop(1000);
    if (monitor) writeFileSync(join(shots, 'real-monitor.log'), monitor.log);
    if (dataDir) rmSync(dataDir, { recursive: true, force: true });
  });

  it('loads the demo region and its charts grow as frames are computed', async () => {
    await page.goto(monitor.url + '/');
    const first = await until(page, 'the demo region with samples and a map', (s) => s.region === 'demo' && s.samples >= 3 && s.link === 'live' && s.mapFrame !== null && s.map.rasterMs > 0);
    await page.locator('#replay').waitFor({ state: 'visible' }); // the demo is a replay
    const later = await until(page, 'more samples', (s) => s.samples >= first.samples + 5);
    expect(later.rateChart.points).toBeGreaterThan(first.rateChart.points);
    expect(later.budgetChart.points).toBeGreaterThan(first.budgetChart.points);
    expect(await page.locator('#feed').innerText()).toMatch(/live.*last frame 2026-.*cadence 12 min/s);
    // The demo says in one line what is watched.
    expect(await page.locator('#demo-note').innerText()).toMatch(/^Demo: an invented active region .* every number is invented\.$/);
    // The gap rule comes from the monitor: the region's default factor.
    expect((await probe(page)).gapFactor).toBe(3);
    // The braid of the demo's footpoints from the monitor's braid route, beside the rate chart
    // (five strands by default: lower bounds, and the legend says so).
    const braid = await until(page, 'the braid chart', (s) => s.braidChart.fetched === 'yes' && s.braidChart.window > 0, 30_000);
    expect(braid.braidChart.xTicks.length).toBeGreaterThanOrEqual(2);
    expect(braid.braidChart.labels[0]).toMatch(/^window/);
    await page.screenshot({ path: join(shots, 'real-01-loaded.png') });
  });

  it('shows an alert raised by the demo scenario in the log and as a marker on the budget chart', async () => {
    const p = await until(page, 'a raised alert', (s) => s.alerts.some((a) => a.state === 'raised' || a.state === 'settled') && s.budgetChart.markers >= 1, 45_000);
    const raised = p.alerts.find((a) => a.state === 'raised' || a.state === 'settled')!;
    const item = page.locator(`#alerts li[data-alert="${raised.id}"]`);
    await item.waitFor({ state: 'visible' });
    expect(await item.innerText()).toMatch(/source: \S+/);
    // Thresholds on the budget chart come from the server's budget rules (|H| in Mx²).
    expect(p.budgetChart.thresholds.length).toBeGreaterThan(0);
    expect(p.budgetChart.thresholds).toContain(2e42);
    // The log in words and units: no wire field names, no rule ids, and every time says its clock.
    const log = await page.locator('#alerts').innerText();
    expect(log).not.toMatch(/\b[a-z]+_[a-z_]+\b|\b(?:peak-rate|sign-reversal|build-up-plateau|data-gap|budget-emerging)\b/);
    expect(log).toMatch(/\(data time\)/);
    // The sign-reversal rule stays quiet on this demo (the budget and the rate keep one sign), and says
    // where the region stands calmly: under its floor, or the rate with the budget's sign.
    const sign = page.locator('#alerts li[data-alert="sign-reversal"]');
    if ((await sign.count()) > 0) {
      expect(await sign.getAttribute('data-state')).toBe('quiet');
      expect(await sign.innerText()).toMatch(/now budget .* under the floor of 9\.0e39 Mx²|now rate .* with the budget's sign/);
    }
    // Markers and labels do not overlap.
    for (const c of [p.rateChart, p.budgetChart]) expect(c.boxesApart).toBe(true);
    await page.locator('#h-alerts').scrollIntoViewIfNeeded();
    await page.screenshot({ path: join(shots, 'real-02-alert.png'), fullPage: true });
    await page.evaluate('window.scrollTo(0, 0)');
    for (const [w, h] of [[1920, 1080], [800, 1000], [1280, 800]] as const) {
      await page.setViewportSize({ width: w, height: h });
      await page.waitForTimeout(400);
      await page.screenshot({ path: join(shots, `real-demo-${w}.png`), fullPage: w === 800 });
    }
  }, 60_000);

  it('shows the map of a picked frame, and highlights a footpoint from the ledger when the server sends any', async () => {
    // Pick the newest sample on the chart (keyboard), so the map and the ledger stay on one frame
    // while the demo streams on.
    await page.locator('#rate-chart').focus();
    await page.keyboard.press('End');
    const p = await until(page, 'a picked frame on the map', (s) => !s.follow && s.mapFrame !== null && s.map.rasterMs > 0);
    if (p.map.footpoints === 0) {
      process.stdout.write('\n[real monitor] the footpoints route answered no footpoints; the ledger-highlight check ran against the test double only\n');
      expect(await page.locator('#ledger tbody td.empty').count()).toBe(1);
      return;
    }
    // The ledger and the map's footpoints arrive by separate requests after the pick: wait until
    // the ledger lists as many footpoints as the map draws (they must agree within the deadline).
    let rows = -1, drawn = p.map.footpoints;
    for (const deadline = Date.now() + 10_000; Date.now() < deadline; await page.waitForTimeout(100)) {
      rows = await page.locator('#ledger tbody tr').count();
      drawn = (await probe(page)).map.footpoints;
      if (rows === drawn) break;
    }
    expect(rows).toBe(drawn);
    const id = (await page.locator('#ledger tbody tr').first().getAttribute('data-id'))!;
    await page.locator(`#ledger tbody tr[data-id="${id}"]`).click();
    await until(page, 'the footpoint highlighted', (s) => s.selectedFootpoint === id && s.map.highlighted === id);
    await page.locator('.panel.map').screenshot({ path: join(shots, 'real-03-map-highlight.png') });
    await page.locator('#follow').click();
    await until(page, 'following again', (s) => s.follow);
  });

  it('pauses and resumes the demo replay from the page with the token', async () => {
    await page.locator('#token-button').click();
    await page.locator('#token-input').fill(monitor.token());
    await page.locator('#token-form button[value="save"]').click();
    await page.locator('#replay-pause').click();
    await page.locator('#replay-text').filter({ hasText: /^paused/ }).waitFor({ timeout: 15_000 });
    await page.locator('#replay-play').click();
    await page.locator('#replay-text').filter({ hasText: /^playing/ }).waitFor({ timeout: 15_000 });
  }, 40_000);

  it('acknowledges an alert with the token kept from the replay step', async () => {
    const p = await probe(page);
    const target = p.alerts.find((a) => a.state === 'raised' || a.state === 'settled')!;
    const [answer] = await Promise.all([
      page.waitForResponse((r) => r.url().endsWith(`/api/regions/demo/alerts/${target.id}/ack`) && r.request().method() === 'POST'),
      page.locator(`#alerts li[data-alert="${target.id}"] button.ack`).click(),
    ]);
    expect(answer.status()).toBe(200);
    const body = (await answer.json()) as { id?: string; acknowledged?: boolean; alert?: { acknowledged: boolean } };
    expect(body.acknowledged ?? body.alert?.acknowledged).toBe(true);
    // Only the answer is checked: the demo may move the rule to a new state right after, which
    // rightly needs a new acknowledgement, so a later read of the page or the store could differ.
  });

  it('recovers after the monitor stops and starts again', async () => {
    const before = await probe(page);
    await monitor.stop(2000);
    await until(page, 'the page to notice the monitor is gone', (s) => s.link === 'reconnecting');
    await page.screenshot({ path: join(shots, 'real-04-down.png') });
    await monitor.start();
    const after = await until(page, 'reconnected with new samples', (s) => s.link === 'live' && s.linkOpens >= 2 && s.samples > before.samples, 45_000);
    expect(after.region).toBe('demo');
    await page.screenshot({ path: join(shots, 'real-05-after-restart.png') });
  }, 70_000);

  it('logged no page errors', () => {
    expect(problems).toEqual([]);
  });
});

describe.skipIf((!chromiumPath || !haveServer) && !inCi)('dashboard in Chromium against the real monitor: an archive replayed, and an empty monitor', () => {
  let browser: LaunchedBrowser;
  let page: Page;
  let monitor: RealMonitor;
  let empty: RealMonitor;
  let dataDir: string;
  let emptyDir: string;
  let archive: string;
  const shots = screenshotDir(root);
  const problems: string[] = [];

  beforeAll(async () => {
    ({ browser, page } = await pageWithErrorLog(problems));
    dataDir = mkdtempSync(join(tmpdir(), 'helicord-real-archive-'));
    emptyDir = mkdtempSync(join(tmpdir(), 'helicord-real-empty-'));
    archive = mkdtempSync(join(tmpdir(), 'helicord-archive-'));
    // An archive of FITS frames without velocities (inferred, as a user's would be): 40 frames at the
    // demo story's 12 min cadence from its 24th hour, where |H| crosses the 2e42 Mx^2 level.
    const quiet = { write: () => true } as unknown as NodeJS.WritableStream;
    await synth({ out: archive, frames: 40, size: 64, withVelocity: false, demo: { storyH: 72, storyStartH: 24, cadenceS: 720 }, progress: quiet });
    monitor = new RealMonitor(root, dataDir, await freePort(), 60, { demo: false, replay: { region: 'ar-replay', folder: archive, speed: 0 } });
    empty = new RealMonitor(root, emptyDir, await freePort(), 60, { demo: false });
    await Promise.all([monitor.start(), empty.start()]);
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    await monitor?.stop(1000);
    await empty?.stop(1000);
    for (const d of [dataDir, emptyDir, archive]) if (d) rmSync(d, { recursive: true, force: true });
  });

  it('shows the replayed archive with map axes, flux, a kept colour range and a readable log', async () => {
    await page.goto(monitor.url + '/');
    const p = await until(page, 'the replayed archive with most of its samples', (s) => s.region === 'ar-replay' && s.samples >= 30 && s.mapFrame !== null && s.map.rasterMs > 0, 120_000);
    const state = (await page.evaluate('window.helicordProbe.state()')) as Probe & {
      map: { axes: { x: string[]; y: string[]; scaleBar: string }; bnRange: number; colourLimit: number };
      fluxChart: { flux: number; yTicks: string[] };
      rateChart: { xTicks: string[]; yTicks: string[]; bandHalfPx: number };
    };
    expect(state.map.axes.x.length).toBeGreaterThanOrEqual(3);
    expect(state.map.axes.scaleBar).toMatch(/^\d+ Mm$/);
    expect(state.rateChart.xTicks.length).toBeGreaterThanOrEqual(3);
    expect(state.rateChart.yTicks.length).toBeGreaterThanOrEqual(3);
    expect(state.rateChart.bandHalfPx).toBeGreaterThanOrEqual(3);
    expect(state.fluxChart.flux).toBeGreaterThan(0);
    expect(await page.locator('#demo-note').isVisible()).toBe(false);
    // The colour range is the one taken from the first frame shown, kept while the replay goes on.
    const range0 = state.map.bnRange;
    await until(page, 'later frames on the map', (s) => s.mapFrame !== p.mapFrame, 60_000).catch(() => undefined);
    expect(((await page.evaluate('window.helicordProbe.state()')) as typeof state).map.bnRange).toBe(range0);
    expect(await page.locator('#alerts').innerText()).not.toMatch(/\b[a-z]+_[a-z_]+\b|\b(?:peak-rate|sign-reversal|build-up-plateau|data-gap|budget-emerging)\b/);
    for (const [w, h] of [[1920, 1080], [800, 1000], [1280, 800]] as const) {
      await page.setViewportSize({ width: w, height: h });
      await page.waitForTimeout(400);
      await page.screenshot({ path: join(shots, `real-archive-${w}.png`), fullPage: w === 800 });
    }
  }, 180_000);

  it('on an empty monitor says how to send a frame to its own address', async () => {
    const other = await browser.context.newPage();
    try {
      await other.goto(empty.url + '/');
      await other.locator('#first-help').waitFor({ state: 'visible' });
      const text = await other.locator('#first-help').innerText();
      expect(text).toContain(`${empty.url}/api/regions/ar-test-`);
      expect(text).toContain('TOKEN=$(cat ./data/token)');
      expect(await other.locator('#feed').innerText()).not.toMatch(/connecting/);
      for (const [w, h] of [[1920, 1080], [800, 1000], [1280, 800]] as const) {
        await other.setViewportSize({ width: w, height: h });
        await other.screenshot({ path: join(shots, `real-empty-${w}.png`) });
      }
    } finally {
      await other.close();
    }
  });

  it('draws heliographic degree axes and reads degrees under the pointer from the wcs the monitor sends with a CEA frame', async () => {
    // Three frames of a CEA patch sent to the (so far empty) monitor, as a user's script would.
    for (let k = 0; k < 3; k++) {
      const r = await fetch(`${empty.url}/api/regions/ar-cea/frames`, { method: 'POST', headers: { authorization: `Bearer ${empty.token()}`, 'content-type': 'application/fits' }, body: ceaFrame(k) });
      expect(r.status, await r.clone().text()).toBe(201);
    }
    const other = await browser.context.newPage();
    try {
      await other.goto(empty.url + '/#region=ar-cea');
      type MapProbe = { region?: string; mapFrame: unknown; map: { axes: { x: string[]; lon: string[]; lat: string[]; worldAxes: string }; rect: { x: number; y: number; w: number; h: number } } };
      const p = await waitForProbe<MapProbe>(other, 'the CEA map with degree axes', (s) => s.region === 'ar-cea' && s.map.axes.lon.length > 0, 30_000, 100);
      expect(p.map.axes.worldAxes).toBe('Carrington');
      // Carrington 121.25 +- 24 pixels of 0.03 deg along the top edge; latitude -18.5 +- 20 rows of
      // 0.03 / cos(18.5 deg) = 0.032 deg (CEA's rows are even in sin(latitude)) on the right.
      const degrees = (labels: string[]): number[] => labels.map((l) => Number(l.replace('°', '').replace('−', '-')));
      expect(p.map.axes.lon.length).toBeGreaterThanOrEqual(2);
      for (const v of degrees(p.map.axes.lon)) expect(Math.abs(v - 121.25)).toBeLessThan(0.8);
      expect(p.map.axes.lat.length).toBeGreaterThanOrEqual(2);
      for (const v of degrees(p.map.axes.lat)) expect(Math.abs(v + 18.5)).toBeLessThan(0.7);
      // Every label says its own value (half-degree ticks keep their decimal).
      for (const labels of [p.map.axes.lon, p.map.axes.lat]) expect(new Set(labels).size).toBe(labels.length);
      expect(p.map.axes.x.length).toBeGreaterThanOrEqual(3); // Mm along the bottom as before
      // The pointer over the middle of the map (pixel 24.5, 20.5 give the reference value exactly).
      const box = (await other.locator('#map').boundingBox())!;
      await other.mouse.move(box.x + p.map.rect.x + p.map.rect.w / 2, box.y + p.map.rect.y + p.map.rect.h / 2);
      await other.locator('#map-readout').filter({ hasText: /Carrington 121\.[23]\d°, −18\.[45]\d°/ }).waitFor({ timeout: 10_000 });
      await other.locator('.panel.map').screenshot({ path: join(shots, 'real-cea-map-degrees.png') });
    } finally {
      await other.close();
    }
  });

  it('logged no page errors', () => {
    expect(problems).toEqual([]);
  });
});
