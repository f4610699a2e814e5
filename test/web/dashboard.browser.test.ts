// Browser tests of the dashboard against the TEST DOUBLE monitor (support/fakeMonitor.ts), which
// speaks the docs/api.md contract with scripted, invented data: the region loads, charts follow new
// frames, a scripted alert reaches the log and the budget chart, a ledger row highlights its
// footpoint, the page recovers after a server restart (and backfills), replay controls, exports.
// The page is built with web/build.mjs into a temporary folder first.

import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Page } from 'playwright-core';
import { announceMissingChromium, chromiumPath, inCi, launchChromium, screenshotDir, type LaunchedBrowser, waitForProbe } from './support/browser.js';
import { niceCeil, robustAbsLimit } from '../../web/colourScale.js';
import { TRIPLE_EXPLANATION } from '../../web/braidWords.js';
import { SPHERE_CAVEAT } from '../../web/sphereWords.js';
import { BRAID_SECOND_SEGMENT, bnMap, CEA_WCS, FAKE_TOKEN, FakeMonitor, newRegionState, pushFrame, raiseBudgetAlert, raiseCrowdedAlerts, type FakeRegionState } from './support/fakeMonitor.js';

const root = fileURLToPath(new URL('../..', import.meta.url));

type Box = { x: number; y: number; w: number; h: number };
type ChartProbe = {
  markers: number; points: number; thresholdLines: number; markerBoxes: Box[]; labelBoxes: Box[]; keyedThresholds: string[]; boxesApart: boolean;
  bandHalfPx: number; bandWidened: boolean; xRange: [number, number]; xTicks: string[]; yTicks: string[]; plot: Box;
};
type Probe = {
  region?: string; samples: number; lastSampleTime: string | null; link: string; linkOpens: number; follow: boolean;
  mapFrame: string | number | null; selectedFootpoint: string | null; gapFactor: number | null;
  view: { kind: string }; shownRange: [number, number] | null;
  alerts: { id: string; state: string; acknowledged: boolean }[];
  map: {
    footpoints: number; outlines: number; glyphs: number; tracks: number; highlighted: string | null; colourBar: string; colourLimit: number; bnRange: number | null;
    axes: { x: string[]; y: string[]; lon: string[]; lat: string[]; worldAxes: string; scaleBar: string };
    rect: { x: number; y: number; w: number; h: number };
  };
  rateChart: ChartProbe;
  budgetChart: ChartProbe & { thresholds: number[] };
  fluxChart: { flux: number; normalised: number; yTicks: string[] };
  braidChart: CompactProbe & { window: number; run: number | null; segmentsDrawn: number; fetched: string; flaggedTriples: string[] };
  sphereChart: CompactProbe & { rotation: number; own: number };
};
type CompactProbe = { points: number[]; labels: string[]; xRange: [number, number]; xTicks: string[]; yTicks: string[]; visible: boolean; plot: Box | null };

/** The page boxes of elements (x, y, w, h), for checking that panels and texts do not overlap. */
async function boxesOf(page: Page, selectors: string[]): Promise<Box[]> {
  const out: Box[] = [];
  for (const sel of selectors) {
    const b = await page.locator(sel).boundingBox();
    if (!b) throw new Error(`${sel} is not laid out`);
    out.push({ x: b.x, y: b.y, w: b.width, h: b.height });
  }
  return out;
}

/** b lies inside a (1 px of slack for borders). */
const inside = (a: Box, b: Box): boolean => b.x >= a.x - 1 && b.y >= a.y - 1 && b.x + b.w <= a.x + a.w + 1 && b.y + b.h <= a.y + a.h + 1;

/** No two boxes overlap (marker triangles, marker labels, threshold labels). */
function overlaps(boxes: Box[]): [Box, Box][] {
  const out: [Box, Box][] = [];
  for (let i = 0; i < boxes.length; i++) {
    for (let j = i + 1; j < boxes.length; j++) {
      const a = boxes[i], b = boxes[j];
      if (a.x < b.x + b.w && b.x < a.x + a.w && a.y < b.y + b.h && b.y < a.y + a.h) out.push([a, b]);
    }
  }
  return out;
}

/** Words that look like the wire's field names (snake_case) or rule ids (kebab-case). */
const INTERNAL_NAME = /\b[a-z]+_[a-z_]+\b|\b(?:peak-rate|sign-reversal|build-up-plateau|data-gap|budget-emerging)\b/;

const probe = (page: Page): Promise<Probe> => page.evaluate('window.helicordProbe.state()') as Promise<Probe>;

const until = (page: Page, what: string, ok: (p: Probe) => boolean, timeoutMs = 10_000): Promise<Probe> =>
  waitForProbe<Probe>(page, what, ok, timeoutMs, 50);

if (!chromiumPath && !inCi) announceMissingChromium();

describe.skipIf(!chromiumPath && !inCi)('dashboard in Chromium against the test double monitor', () => {
  let browser: LaunchedBrowser;
  let page: Page;
  let monitor: FakeMonitor;
  let region: FakeRegionState;
  let regions: Map<string, FakeRegionState>;
  let outDir: string;
  const shots = screenshotDir(root);
  const problems: string[] = [];
  let serverDown = false;
  const foreign: string[] = [];

  beforeAll(async () => {
    if (!chromiumPath) throw new Error('CI=true but no Chromium found: the browser tests must run in CI (apt-get install chromium)');
    outDir = mkdtempSync(join(tmpdir(), 'helicord-page-'));
    const { buildPage } = await import('../../web/build.mjs');
    await buildPage(outDir);
    region = newRegionState('demo');
    for (let k = 0; k < 30; k++) pushFrame(region, k, undefined, { skipGapBefore: k === 18 });
    regions = new Map([[region.name, region], ['quiet-region', newRegionState('quiet-region')]]);
    monitor = new FakeMonitor(regions, outDir);
    await monitor.listen();
    browser = await launchChromium(chromiumPath);
    page = await browser.context.newPage();
    page.on('console', (m) => {
      // Failed loads are reported with their URL by the response handler below.
      // While the test stops the server on purpose, the page's reconnect attempts fail by design.
      const expectedDown = serverDown && /WebSocket connection to .* failed/.test(m.text());
      if ((m.type() === 'error' || m.type() === 'warning') && !m.text().startsWith('Failed to load resource') && !expectedDown) problems.push(`${m.type()}: ${m.text()}`);
    });
    page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
    page.on('response', (r) => {
      if (r.status() >= 400) problems.push(`HTTP ${r.status()} ${r.url()}`);
    });
    page.on('request', (r) => {
      const u = r.url();
      if (!u.startsWith(monitor.url) && !u.startsWith(monitor.url.replace('http', 'ws')) && !u.startsWith('data:') && !u.startsWith('blob:')) foreign.push(u);
    });
  });

  afterAll(async () => {
    await browser?.close();
    await monitor?.close();
    if (outDir) rmSync(outDir, { recursive: true, force: true });
  });

  it('loads the demo region: series, map with footpoints, ledger, cautions, no outside fetch', async () => {
    await page.goto(monitor.url + '/');
    const p = await until(page, 'the demo region to load', (s) => s.samples === 30 && s.map.footpoints === 3 && s.link === 'live');
    expect(p.region).toBe('demo');
    expect(p.mapFrame).toBe(29); // follows the latest frame
    expect(p.map.outlines).toBe(3);
    expect(p.map.glyphs).toBe(1); // footpoint 3 is round, footpoint 2 turns within its error: rings
    expect(p.map.tracks).toBe(3);
    expect(p.rateChart.points).toBeGreaterThan(30); // 30 samples plus the break in the gap
    expect(await page.locator('#ledger tbody tr').count()).toBe(3);
    expect(await page.locator('#region option').count()).toBe(2);
    expect(await page.locator('#caution').innerText()).toMatch(/research indicators, not forecasts.*NOAA SWPC/);
    // Said once on the page, not repeated per panel.
    expect(((await page.locator('body').innerText()).match(/research indicators/g) ?? []).length).toBe(1);
    expect(await page.locator('#feed').innerText()).toMatch(/live.*last frame 2026-03-14 11:48:00 UTC.*cadence 12 min.*1 gap/s);
    // Before any alert, the budget chart shows the published default thresholds.
    expect(p.budgetChart.thresholds).toEqual([2e42, 9e41]);
    // The bn colour range is taken from the first frame shown (29) and is symmetric.
    expect(p.map.bnRange).toBe(niceCeil(robustAbsLimit(bnMap(29))));
    expect(p.map.colourLimit).toBe(p.map.bnRange);
    // One frame numbering: the 30th frame of the series, the stored id on hover.
    expect(await page.locator('#map-frame').innerText()).toMatch(/^frame 30 of 30 · 2026-03-14 11:48:00 UTC$/);
    expect(await page.locator('#map-frame').getAttribute('title')).toBe('stored frame id 29');
    // Values under the noise read "—" with the reason on hover, never as a number.
    const row2 = page.locator('#ledger tbody tr[data-id="2"]');
    expect(await row2.locator('td.rotation').innerText()).toBe('—');
    expect(await row2.locator('td.rotation').getAttribute('title')).toMatch(/^rotation −3\.1°\/h is within its error ±6\.2°\/h \(1σ\)$/);
    const row3 = page.locator('#ledger tbody tr[data-id="3"]');
    expect(await row3.locator('td.spin').innerText()).toBe('—');
    expect(await row3.locator('td.spin').getAttribute('title')).toBe('rotation not observable (round footpoint)');
    expect(await row3.locator('td.rotation').getAttribute('title')).toBe('rotation not observable (round footpoint)');
    expect(await page.locator('#ledger tbody').innerText()).not.toMatch(/e-\d+°\/h|not measurable/);
    expect(await page.locator('#rate-provenance').innerText()).toBe(
      "velocity inferred (DAVE) from the field's motions; spin of round footpoints not observable (not in the spin rate)",
    );
    // The gap rule comes from the monitor's snapshot.
    expect(p.gapFactor).toBe(3);
    // Axes a reader can quote: the map in Mm (96 pixels of 0.72 Mm: 0 to 69 Mm) with a scale bar,
    // the charts with time and value ticks.
    expect(p.map.axes.x).toEqual(expect.arrayContaining(['0', '20', '40', '60']));
    expect(p.map.axes.y).toEqual(expect.arrayContaining(['0', '20', '40', '60']));
    expect(p.map.axes.scaleBar).toMatch(/^\d+ Mm$/);
    for (const c of [p.rateChart, p.budgetChart]) {
      expect(c.xTicks.filter((t) => /\d\d:\d\d|03-14/.test(t)).length).toBeGreaterThanOrEqual(3);
      expect(c.yTicks.length).toBeGreaterThanOrEqual(3);
    }
    // The ±1σ band shows even where it is thinner than the line.
    expect(p.rateChart.bandHalfPx).toBeGreaterThanOrEqual(3);
    expect(p.budgetChart.bandHalfPx).toBeGreaterThanOrEqual(3);
    // The flux panel: Phi and H/Phi^2 for every sample, with their own axis ticks.
    expect(p.fluxChart.flux).toBe(30);
    expect(p.fluxChart.normalised).toBe(30);
    expect(p.fluxChart.yTicks.some((t) => /e21/.test(t))).toBe(true);
    await page.screenshot({ path: join(shots, 'fake-01-loaded.png') });
  });

  it('updates the charts and the map as frames arrive', async () => {
    const before = await probe(page);
    for (let k = 30; k < 33; k++) pushFrame(region, k, monitor);
    const p = await until(page, 'three new samples', (s) => s.samples === 33 && s.mapFrame === 32);
    expect(p.lastSampleTime).toBe(region.samples.at(-1)!.time);
    expect(p.rateChart.points).toBe(before.rateChart.points + 3);
    expect(p.budgetChart.points).toBe(before.budgetChart.points + 3);
    // The field doubles from frame 30 on; the colour range stays the one of the first frame shown,
    // where a range taken per frame would have jumped.
    expect(niceCeil(robustAbsLimit(bnMap(32)))).not.toBe(before.map.bnRange);
    expect(p.map.bnRange).toBe(before.map.bnRange);
    expect(p.map.colourLimit).toBe(before.map.colourLimit);
    expect(await page.locator('#map-frame').innerText()).toMatch(/^frame 33 of 33 · /);
    await page.locator('.panel.map').screenshot({ path: join(shots, 'fake-09-map-range-kept.png') });
    // The user can set the range; it holds for later frames too.
    await page.locator('#map-range').selectOption('3000');
    await until(page, 'the chosen colour range', (s) => s.map.colourLimit === 3000 && s.map.bnRange === 3000);
    await page.locator('#map-range').selectOption('');
    await until(page, 'the range taken again from the frame shown', (s) => s.map.bnRange === niceCeil(robustAbsLimit(bnMap(32))));
  });

  it('shows the braid entropy beside the rate chart on its time range, and the braided triple in the ledger', async () => {
    // 33 frames: the window's rate is null on the first frame of each segment (0 and 12).
    const p = await until(page, 'the braid chart', (s) => s.braidChart.fetched === 'yes' && s.braidChart.window === 31);
    const b = p.braidChart;
    expect(b.visible).toBe(true);
    // The same time axis and range as the rate chart.
    expect(b.xRange).toEqual(p.rateChart.xRange);
    expect(b.xTicks.length).toBeGreaterThanOrEqual(2);
    expect(b.xTicks).toEqual(p.rateChart.xTicks);
    // ... at the same pixels: one time is one column on both plots.
    expect(Math.abs(b.plot!.x - p.rateChart.plot.x)).toBeLessThan(1);
    expect(Math.abs(b.plot!.w - p.rateChart.plot.w)).toBeLessThan(1);
    expect(b.plot!.h).toBeGreaterThan(80);
    expect(b.yTicks.length).toBeGreaterThanOrEqual(2);
    expect(b.run).toBe(0.15); // the run's rate, a horizontal reference line
    expect(b.segmentsDrawn).toBe(2); // frames 0 and 12
    expect(b.labels).toEqual(['window', 'whole run', 'segment start']); // 3 strands: exact, no "lower bound"
    const note = await page.locator('#braid-note').innerText();
    expect(note).toBe('window 4 h: 0.16 h⁻¹ · whole run 6.4 h, 2 segments: 0.15 h⁻¹ · exact (3 strands: 1, 2, 3) · segment since 08:24 UTC: footpoint 4 outgrew footpoint 3 · to 12:24 UTC');
    expect(region.frames[BRAID_SECOND_SEGMENT].time.slice(11, 16)).toBe('08:24');
    expect(note).not.toMatch(/lower bound/);
    // The flagged triple in the ledger with its one line of explanation.
    expect(b.flaggedTriples).toEqual(['1-2-3']);
    const row = page.locator('#triples-body tr[data-ids="1-2-3"]');
    expect(await row.locator('td').allInnerTexts()).toEqual(['1, 2, 3', '2.887', '1', '0, 0, 0']);
    expect(await page.locator('#triples-explain').innerText()).toBe(TRIPLE_EXPLANATION);
    expect(await page.locator('#triples-caption').innerText()).toBe('1 of 1 triples of the braid window (4 h)');
    // Nothing overlaps: the panels beside each other, the braid's texts inside its panel, the triples inside the ledger.
    const [rate, braid, budget, flux, map, ledger, alerts, braidNote, braidCanvas, triples] = await boxesOf(page,
      ['.panel.rate', '.panel.braid', '.panel.budget', '.panel.flux', '.panel.map', '.panel.ledger', '.panel.alerts', '#braid-note', '#braid-chart', '#braid-triples']);
    expect(overlaps([rate, braid, budget, flux, map, ledger, alerts])).toEqual([]);
    expect(inside(braid, braidNote) && inside(braid, braidCanvas) && inside(ledger, triples)).toBe(true);
    expect(overlaps([braidNote, braidCanvas])).toEqual([]);
    // A flat region: no sphere panel.
    expect(await page.locator('#sphere-panel').isHidden()).toBe(true);
    await page.locator('.panel.braid').screenshot({ path: join(shots, 'fake-15-braid.png') });
    await page.locator('.panel.ledger').screenshot({ path: join(shots, 'fake-16-braided-triples.png') });
    await page.evaluate('window.scrollTo(0, 0)');
  });

  it('shows values with units on hover and shows the picked frame on the map', async () => {
    const box = (await page.locator('#rate-chart').boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.3, box.y + box.height * 0.55);
    const readout = page.locator('#rate-readout');
    await readout.waitFor({ state: 'visible' });
    const text = await readout.innerText();
    expect(text).toMatch(/2026-03-14 \d\d:\d\d:00 UTC/);
    expect(text).toMatch(/total [−\d.e]+ Mx²\/s ± 2\.0e35/);
    expect(text).toMatch(/spin .* Mx²\/s/);
    // The sample's flags in words, not as the wire spells them.
    expect(text).toContain('notes: spin of round footpoints not observable');
    expect(text).not.toMatch(/spin-unobservable/);
    await page.screenshot({ path: join(shots, 'fake-02-hover.png') });
    await page.mouse.click(box.x + box.width * 0.3, box.y + box.height * 0.55);
    const p = await until(page, 'the picked frame on the map', (s) => !s.follow && s.mapFrame !== 32 && s.mapFrame !== null);
    expect(Number(p.mapFrame)).toBeGreaterThan(0);
    expect(Number(p.mapFrame)).toBeLessThan(20);
    expect(await page.locator('#follow').isVisible()).toBe(true);
    // Keyboard: on the focused chart the arrow keys step the picked frame.
    await page.locator('#rate-chart').focus();
    await page.keyboard.press('ArrowRight');
    await until(page, 'one frame later', (s) => s.mapFrame === Number(p.mapFrame) + 1);
    await page.keyboard.press('Escape');
    await until(page, 'following the latest again', (s) => s.follow && s.mapFrame === 32);
  });

  it('puts a scripted alert in the log and on the budget chart', async () => {
    const threshold = region.samples.at(-3)!.budget_total as number;
    const alert = raiseBudgetAlert(region, threshold, monitor);
    const item = page.locator(`#alerts li[data-alert="${alert.id}"]`);
    await item.waitFor({ state: 'visible' });
    expect(await item.getAttribute('data-state')).toBe('raised');
    const text = await item.innerText();
    expect(text).toMatch(/raised/i);
    expect(text).toContain('Accumulated helicity above the level for emerging regions');
    expect(text).toContain('source: Liokati et al. 2022');
    // In words and units, in data time, with the wall-clock arrival beside it.
    expect(text).toMatch(/when raised: \|budget\| \d\.\de\d\d Mx² ± [\d.]+e\d\d Mx² past \d\.\de\d\d Mx²/);
    expect(text).toMatch(/raised since 2026-03-14 \d\d:\d\d UTC \(data time\) · arrived 20\d\d-\d\d-\d\d \d\d:\d\d:\d\d UTC \(wall clock\)/);
    expect(text).not.toMatch(INTERNAL_NAME);
    const p = await until(page, 'the alert marker on the budget chart', (s) => s.budgetChart.markers === 1);
    // The threshold now comes from the alert, not the defaults.
    expect(p.budgetChart.thresholds).toEqual([threshold]);
    expect(p.budgetChart.thresholdLines).toBe(1);
    await page.locator('.panel.budget').screenshot({ path: join(shots, 'fake-03-budget-alert.png') });
  });

  it('keeps markers and labels apart when alerts crowd, and says the quiet rules in current values', async () => {
    raiseCrowdedAlerts(region, monitor);
    const p = await until(page, 'three raised moments within two samples', (s) => s.alerts.length === 7 && s.rateChart.thresholdLines === 1 && s.budgetChart.markers >= 1);
    // Three moments 12 min apart (budget-emerging and sign-reversal at the same sample): one marker per place, a label each.
    expect(p.rateChart.markers).toBe(2);
    expect(p.rateChart.labelBoxes.length + p.rateChart.keyedThresholds.length).toBeGreaterThanOrEqual(3);
    for (const c of [p.rateChart, p.budgetChart]) {
      expect(overlaps([...c.markerBoxes, ...c.labelBoxes])).toEqual([]);
      expect(c.boxesApart).toBe(true);
    }
    // The rate threshold (+3e36; -3e36 is off the scale) runs through the curve's range: where its label finds no
    // room off the curves it is named in the note under the chart.
    if (p.rateChart.keyedThresholds.length > 0) expect(await page.locator('#rate-note').innerText()).toContain('3.0e36 Mx²/s');
    const log = await page.locator('#alerts').innerText();
    expect(log).not.toMatch(INTERNAL_NAME);
    expect(log).not.toMatch(/value 0 ± 0|window .*–.*00:00/);
    // Quiet rules: where the region stands now, from the newest sample.
    const last = region.samples.at(-1)!;
    const quietBudget = await page.locator('#alerts li[data-alert="budget"]').innerText();
    expect(quietBudget).toContain(`now |budget| ${(last.budget_total as number).toExponential(1).replace('e+', 'e')} Mx²`);
    expect(quietBudget).toMatch(/% of 2\.0e42 Mx²/);
    expect(await page.locator('#alerts li[data-alert="build-up-plateau"]').innerText()).toMatch(/now built up \d\.\de\d\d Mx² over [\d.]+ (h|min), flat for/);
    expect(await page.locator('#alerts li[data-alert="data-gap"]').innerText()).toMatch(/1 gap, the last 2026-03-14 \d\d:\d\d – \d\d:\d\d UTC \(data time\) \(a gap: a step over 3 × the 12 min cadence\)/);
    // The refusals rule runs on the wall clock and says so; a rule that never changed names no moment.
    const refusals = await page.locator('#alerts li[data-alert="refusals"]').innerText();
    expect(refusals).toMatch(/quiet, never raised so far/);
    expect(refusals).toMatch(/0 frames refused since the region began \(counted on the wall clock, as frames arrive\)/);
    // The sign-reversal rule in words: the rate against the budget's sign.
    expect(await page.locator('#alerts li[data-alert="sign-reversal"]').innerText()).toMatch(/when raised: rate 3\.1e36 Mx²\/s ± 2\.0e35 Mx²\/s against the budget's sign \(−2\.2e42 Mx²\)/);
    await page.locator('.panel.rate').screenshot({ path: join(shots, 'fake-10-crowded-markers.png') });
    await page.locator('.panel.alerts').screenshot({ path: join(shots, 'fake-11-alert-log.png') });
  });

  it('reads Bn and G_theta with units under the pointer on the map', async () => {
    await page.locator('#map').scrollIntoViewIfNeeded();
    const box = (await page.locator('#map').boundingBox())!;
    // The middle of the map image (any pixel of the map gives a reading).
    const rect = (await probe(page)).map.rect;
    expect(rect.w).toBeGreaterThan(100);
    await page.mouse.move(box.x + rect.x + rect.w / 2, box.y + rect.y + rect.h / 2);
    const readout = page.locator('#map-readout');
    await readout.waitFor({ state: 'visible', timeout: 5000 }).catch(async (e: Error) => {
      throw new Error(`${e.message}; map box ${JSON.stringify(box)}, image ${JSON.stringify(rect)}, viewport ${JSON.stringify(page.viewportSize())}`);
    });
    await readout.filter({ hasText: /G_θ [−\d.e-]+ Mx² (s⁻¹ cm⁻²|cm⁻² s⁻¹)|G_θ — \(no data\)/ }).waitFor({ timeout: 5000 }).catch(async (e: Error) => {
      throw new Error(`${e.message}; the readout says ${JSON.stringify(await readout.innerText())}`);
    });
    const text = await readout.innerText();
    expect(text).toMatch(/^x [\d.]+ Mm, y [\d.]+ Mm\nBn (−)?[\d.]+ G\nG_θ /);
    await page.locator('.panel.map').screenshot({ path: join(shots, 'fake-12-map-hover.png') });
    await page.mouse.move(0, 0);
  });

  it('shows a chosen time range on every chart and exports only that range', async () => {
    const last = Date.parse(region.samples.at(-1)!.time);
    await page.locator('#range-6h').click();
    let p = await until(page, 'the last 6 h', (s) => s.view.kind === 'last' && s.rateChart.xRange[0] === last - 6 * 3_600_000);
    expect(p.shownRange).toEqual([last - 6 * 3_600_000, last]);
    expect(p.budgetChart.xRange).toEqual(p.rateChart.xRange);
    expect(p.rateChart.bandHalfPx).toBeGreaterThanOrEqual(3);
    expect(await page.locator('#range-text').innerText()).toMatch(/^last 6 h: 2026-03-14 06:24 UTC – 2026-03-14 12:24 UTC \(data time\)$/);
    // The exports follow the range: the CSV holds the samples of the last 6 h only.
    const [csvDownload] = await Promise.all([page.waitForEvent('download'), page.locator('#export-csv').click()]);
    expect(csvDownload.suggestedFilename()).toBe('demo-series-20260314-0624-20260314-1224.csv');
    const csvPath = join(shots, 'fake-export-range.csv');
    await csvDownload.saveAs(csvPath);
    const lines = readFileSync(csvPath, 'utf8').trim().split('\n');
    const inRange = region.samples.filter((x) => Date.parse(x.time) >= last - 6 * 3_600_000);
    expect(lines.length - 1).toBe(inRange.length);
    expect(lines[1].split(',')[0]).toBe(inRange[0].time);
    // Pan to earlier by half the span: it stops at the first sample (06:00) rather than show empty time.
    const first = Date.parse(region.samples[0].time);
    await page.locator('#range-earlier').click();
    p = await until(page, 'panned earlier', (s) => s.view.kind === 'fixed' && s.rateChart.xRange[0] === first);
    expect(p.rateChart.xRange).toEqual([first, first + 6 * 3_600_000]);
    expect(await page.locator('#range-earlier').isDisabled()).toBe(true);
    // A range dragged out on the budget chart (below the braid panel: scrolled into view first).
    await page.locator('#budget-chart').scrollIntoViewIfNeeded();
    const chart = (await page.locator('#budget-chart').boundingBox())!;
    await page.mouse.move(chart.x + chart.width * 0.35, chart.y + chart.height * 0.5);
    await page.mouse.down();
    await page.mouse.move(chart.x + chart.width * 0.5, chart.y + chart.height * 0.5, { steps: 5 });
    await page.mouse.move(chart.x + chart.width * 0.6, chart.y + chart.height * 0.5, { steps: 5 });
    await page.mouse.up();
    p = await until(page, 'the dragged range on the charts', (s) => s.view.kind === 'fixed' && s.shownRange !== null && s.shownRange[1] - s.shownRange[0] < 3 * 3_600_000 &&
      s.rateChart.xRange[0] === s.shownRange[0] && s.budgetChart.xRange[1] === s.shownRange[1]);
    // Dragged from 35 % to 60 % of the chart's width: a span inside the 6 h shown before.
    expect(p.shownRange![0]).toBeGreaterThan(first);
    expect(p.shownRange![1]).toBeLessThan(first + 6 * 3_600_000);
    expect(p.rateChart.bandHalfPx).toBeGreaterThanOrEqual(3);
    expect(p.rateChart.xTicks.length).toBeGreaterThanOrEqual(2);
    await page.evaluate('window.scrollTo(0, 0)');
    await page.screenshot({ path: join(shots, 'fake-13-zoomed.png') });
    await page.locator('#range-reset').click();
    p = await until(page, 'all again on the charts', (s) => s.view.kind === 'all' && s.follow && s.rateChart.xRange[0] === first);
    expect(p.rateChart.xRange).toEqual([first, last]);
  });

  it('acknowledges an alert after asking for the token once', async () => {
    await page.locator('#alerts button.ack').first().click();
    await page.locator('#token-dialog').waitFor({ state: 'visible' });
    await page.locator('#token-input').fill(FAKE_TOKEN);
    await page.locator('#token-form button[value="save"]').click();
    await until(page, 'the alert acknowledged', (s) => s.alerts.some((a) => a.acknowledged));
    expect(await page.locator('#alerts button.ack').first().innerText()).toBe('acknowledged');
    expect(await page.evaluate('sessionStorage.getItem("helicord.token")')).toBe(FAKE_TOKEN);
    await page.screenshot({ path: join(shots, 'fake-08-full-page.png'), fullPage: true });
  });

  it('highlights the footpoint of a clicked ledger row on the map, and sorts the ledger', async () => {
    const before = await page.locator('#map').screenshot();
    await page.locator('#ledger tbody tr[data-id="2"]').click();
    const p = await until(page, 'footpoint 2 highlighted', (s) => s.map.highlighted === '2');
    expect(p.selectedFootpoint).toBe('2');
    expect(await page.locator('#ledger tbody tr[data-id="2"]').getAttribute('aria-selected')).toBe('true');
    const after = await page.locator('#map').screenshot();
    expect(after.equals(before)).toBe(false);
    await page.locator('.panel.map').screenshot({ path: join(shots, 'fake-04-map-highlight.png') });
    // Keyboard: Enter on a focused row selects it.
    await page.locator('#ledger tbody tr[data-id="1"]').focus();
    await page.keyboard.press('Enter');
    await until(page, 'footpoint 1 highlighted', (s) => s.map.highlighted === '1');
    // Sorting by id ascending.
    await page.locator('#ledger th[data-key="id"] button').click();
    const ids = await page.locator('#ledger tbody tr').evaluateAll((rows) => rows.map((r) => r.getAttribute('data-id')));
    expect(ids).toEqual(['1', '2', '3']);
    expect(await page.locator('#ledger th[data-key="id"]').getAttribute('aria-sort')).toBe('ascending');
    // The G_theta overlay switches the colour bar to the density.
    await page.locator('#overlay').check();
    await until(page, 'the G_theta overlay', (s) => s.map.colourBar === 'Mx^2 s^-1 cm^-2');
    await page.locator('.panel.map').screenshot({ path: join(shots, 'fake-05-map-gtheta.png') });
    await page.locator('#overlay').uncheck();
    await until(page, 'bn again', (s) => s.map.colourBar === 'G');
  });

  it('offers the series CSV and the map and charts as PNG', async () => {
    const href = await page.locator('#export-csv').getAttribute('href');
    expect(href).toBe('/api/regions/demo/export.csv');
    const csv = await (await fetch(monitor.url + href)).text();
    expect(csv.split('\n')[0]).toBe('time,dt_s,rate_total,rate_spin,rate_orbit,rate_background,budget_total,budget_spin,budget_orbit');
    const [mapDownload] = await Promise.all([page.waitForEvent('download'), page.locator('#map-png').click()]);
    expect(mapDownload.suggestedFilename()).toBe('demo-frame-32-map.png');
    const mapPath = join(shots, 'fake-export-map.png');
    await mapDownload.saveAs(mapPath);
    const [chartDownload] = await Promise.all([page.waitForEvent('download'), page.locator('#budget-png').click()]);
    expect(chartDownload.suggestedFilename()).toBe('demo-budget.png');
    await chartDownload.saveAs(join(shots, 'fake-export-budget.png'));
  });

  it('recovers after the server restarts and backfills what it missed', async () => {
    const port = monitor.port;
    serverDown = true;
    await monitor.close();
    await until(page, 'the page to notice', (s) => s.link === 'reconnecting');
    expect(await page.locator('#feed').innerText()).toMatch(/reconnecting/);
    await page.screenshot({ path: join(shots, 'fake-06-server-down.png') });
    // Frames computed while the page was away.
    for (let k = 33; k < 36; k++) pushFrame(region, k);
    monitor = new FakeMonitor(regions, outDir);
    await monitor.listen(port);
    const p = await until(page, 'reconnect, backfill and the newest frame on the map', (s) => s.link === 'live' && s.samples === 36 && s.mapFrame === 35, 20_000);
    serverDown = false;
    expect(p.linkOpens).toBeGreaterThanOrEqual(2);
    expect(monitor.received).toContainEqual({ type: 'backfill', since: region.samples[32].time });
    // Live updates continue on the new link.
    pushFrame(region, 36, monitor);
    await until(page, 'a live sample after the restart', (s) => s.samples === 37);
  });

  it('takes a snapshot sent after a rewind as the truth over its span', async () => {
    const before = await probe(page);
    // A late frame moved the newest pair sample to another mid-time.
    const dropped = region.samples.pop()!;
    const moved = { ...dropped, time: new Date(Date.parse(dropped.time) - 6 * 60_000).toISOString(), rate_total: 1.23e36 };
    region.samples.push(moved);
    monitor.resync(region);
    const p = await until(page, 'the rewound series', (s) => s.lastSampleTime === moved.time);
    expect(p.samples).toBe(before.samples);
  });

  it('shows replay controls for a replayed region and sends the actions', async () => {
    // The replay has sent as many frames as the series holds: the bar and the map caption agree.
    region.replay = { state: 'playing', speed: 60, position: region.samples.length, total: 40 };
    monitor.broadcast({ type: 'status', status: monitor.status(region) });
    await page.locator('#replay').waitFor({ state: 'visible' });
    const n = region.samples.length;
    expect(await page.locator('#replay-text').innerText()).toBe(`playing · frame ${n} of 40 · ×60`);
    await page.locator('#map-frame').filter({ hasText: `frame ${n} of 40` }).waitFor();
    await page.locator('#replay-pause').click();
    await page.locator('#replay-text').filter({ hasText: 'paused' }).waitFor();
    await page.locator('#replay-speed').selectOption('0');
    await page.locator('#replay-text').filter({ hasText: 'as fast as possible' }).waitFor();
    await page.locator('#replay-seek').fill('25');
    await page.locator('#replay-text').filter({ hasText: 'frame 25 of 40' }).waitFor();
    expect(region.replayActions).toEqual([{ action: 'pause' }, { action: 'speed', value: 0 }, { action: 'seek', value: 25 }]);
    await page.screenshot({ path: join(shots, 'fake-07-replay.png') });
  });

  it('switches regions from the picker and back', async () => {
    await page.locator('#region').selectOption('quiet-region');
    const q = await until(page, 'the empty region', (s) => s.region === 'quiet-region' && s.link === 'live');
    expect(q.samples).toBe(0);
    expect(q.mapFrame).toBeNull();
    expect(await page.locator('#ledger tbody td.empty').count()).toBe(1);
    expect(await page.locator('#alerts li.empty').count()).toBe(1);
    expect(await page.locator('#export-csv').getAttribute('href')).toBe('/api/regions/quiet-region/export.csv');
    expect(page.url()).toMatch(/#region=quiet-region$/);
    await page.locator('#region').selectOption('demo');
    await until(page, 'the demo region again', (s) => s.region === 'demo' && s.samples === region.samples.length && s.mapFrame === region.frames.at(-1)!.frame_id);
  });

  it('asks for the token first on a monitor that protects reading, then loads', async () => {
    const guarded = new FakeMonitor(regions, outDir, { protectReads: true });
    await guarded.listen();
    const other = await browser.context.newPage();
    try {
      await other.goto(guarded.url + '/');
      await other.locator('#token-dialog').waitFor({ state: 'visible' });
      expect(await other.locator('#region-note').innerText()).toMatch(/needs the token for reading/);
      await other.locator('#token-input').fill(FAKE_TOKEN);
      await other.locator('#token-form button[value="save"]').click();
      await until(other, 'the guarded region to load', (s) => s.region === 'demo' && s.link === 'live' && s.samples === region.samples.length && s.map.footpoints === 3);
    } finally {
      await other.close();
      await guarded.close();
    }
  });

  it('on an empty monitor says how to send a frame, with this address and where the token is', async () => {
    const empty = new FakeMonitor(new Map(), outDir);
    await empty.listen();
    const other = await browser.context.newPage();
    try {
      await other.goto(empty.url + '/');
      const help = other.locator('#first-help');
      await help.waitFor({ state: 'visible' });
      const text = await help.innerText();
      expect(text).toContain(`${empty.url}/api/regions/ar-test-`);
      expect(text).toMatch(/TOKEN=\$\(cat \.\/data\/token\)/);
      expect(text).toMatch(/data folder \(--data, \.\/data by default\)/);
      expect(text).toMatch(/--data-binary @frame\.fits/);
      // Not stuck on "connecting" with empty 0-1 charts: the charts are not shown at all.
      expect(await other.locator('#panels').isVisible()).toBe(false);
      expect(await other.locator('#feed').innerText()).toMatch(/no region yet · waiting for the first frame/);
      for (const [w, h] of [[1280, 800], [1920, 1080], [800, 1000]] as const) {
        await other.setViewportSize({ width: w, height: h });
        await other.screenshot({ path: join(shots, `fake-empty-${w}.png`) });
      }
    } finally {
      await other.close();
      await empty.close();
    }
  });

  it('adds heliographic degree axes and the pointer position in degrees when the maps carry a WCS', async () => {
    const cea = newRegionState('ar-cea');
    cea.wcs = CEA_WCS;
    for (let k = 0; k < 4; k++) pushFrame(cea, k);
    const withWcs = new FakeMonitor(new Map([['ar-cea', cea]]), outDir);
    await withWcs.listen();
    const other = await browser.context.newPage();
    try {
      await other.goto(withWcs.url + '/');
      const p = await until(other, 'the map with degree axes', (s) => s.map.axes.lon.length > 0);
      // Carrington 121.25 +- 48 pixels of 0.0593 deg (about 2.8 deg) along the top edge; -18.5 +- 2.8 on the right.
      expect(p.map.axes.worldAxes).toBe('Carrington');
      const degrees = (labels: string[]): number[] => labels.map((l) => Number(l.replace('°', '').replace('−', '-')));
      expect(p.map.axes.lon.length).toBeGreaterThanOrEqual(2);
      for (const v of degrees(p.map.axes.lon)) expect(Math.abs(v - 121.25)).toBeLessThan(3);
      expect(p.map.axes.lat.length).toBeGreaterThanOrEqual(2);
      for (const v of degrees(p.map.axes.lat)) expect(Math.abs(v + 18.5)).toBeLessThan(3);
      expect(p.map.axes.x).toEqual(expect.arrayContaining(['0', '20', '40', '60']));
      const box = (await other.locator('#map').boundingBox())!;
      await other.mouse.move(box.x + p.map.rect.x + p.map.rect.w / 2, box.y + p.map.rect.y + p.map.rect.h / 2);
      await other.locator('#map-readout').filter({ hasText: /Carrington 12[01]\.\d\d°, −1[89]\.\d\d°/ }).waitFor();
      await other.locator('.panel.map').screenshot({ path: join(shots, 'fake-14-map-degrees.png') });
    } finally {
      await other.close();
      await withWcs.close();
    }
  });

  it('on a whole-Sun region: the rotation share and the hemispheres with the caveat, the braid as a lower bound, fetched throttled', async () => {
    const sun = newRegionState('whole-sun', { sphere: true, braidStrands: 5 });
    for (let k = 0; k < 20; k++) pushFrame(sun, k);
    const sunMonitor = new FakeMonitor(new Map([['whole-sun', sun]]), outDir);
    await sunMonitor.listen();
    const other = await browser.context.newPage();
    try {
      await other.goto(sunMonitor.url + '/');
      const p = await until(other, 'the sphere panel and the braid', (s) => s.samples === 20 && s.sphereChart.visible && s.braidChart.window === 18);
      expect(p.sphereChart.rotation).toBe(20);
      expect(p.sphereChart.own).toBe(20);
      expect(p.sphereChart.xRange).toEqual(p.rateChart.xRange);
      expect(Math.abs(p.sphereChart.plot!.x - p.rateChart.plot.x)).toBeLessThan(1);
      expect(p.sphereChart.yTicks.length).toBeGreaterThanOrEqual(2);
      expect(p.sphereChart.labels).toEqual(['differential rotation', 'own motions']);
      const last = sun.samples.at(-1)!;
      const words = await other.locator('#sphere-words').innerText();
      // The newest row: rotation -6e35 of the total, the hemisphere budgets (70 % / 30 % of the total).
      expect(words).toContain(`rotation −6.0e35 Mx²/s of ${(last.rate_total / 1e36).toFixed(1)}e36 Mx²/s`);
      expect(words).toMatch(/budget north [\d.]+e\d\d Mx², south [\d.]+e\d\d Mx²/);
      expect(await other.locator('#sphere-caveat').innerText()).toBe(SPHERE_CAVEAT);
      // Five strands: the entropies are lower bounds, and the page says so.
      expect(p.braidChart.labels.slice(0, 2)).toEqual(['window (lower bound)', 'whole run (lower bound)']);
      expect(await other.locator('#braid-note').innerText()).toMatch(/lower bounds \(5 strands: 1, 2, 3, 4, 5; the Burau matrix on the unit circle\)/);
      const [rate, braid, sphere, budget, map] = await boxesOf(other, ['.panel.rate', '.panel.braid', '#sphere-panel', '.panel.budget', '.panel.map']);
      expect(overlaps([rate, braid, sphere, budget, map])).toEqual([]);
      // Twelve frames within a second: the braid is asked again a few times, not per frame, and the newest frame is covered.
      const asked = sunMonitor.braidRequests;
      for (let k = 20; k < 32; k++) pushFrame(sun, k, sunMonitor);
      await until(other, 'the braid of the newest frame', (s) => s.samples === 32 && s.braidChart.window === 30, 15_000);
      expect(sunMonitor.braidRequests - asked).toBeGreaterThanOrEqual(1);
      expect(sunMonitor.braidRequests - asked).toBeLessThanOrEqual(3);
      for (const [w, h] of [[1920, 1080], [800, 1000], [1280, 800]] as const) {
        await other.setViewportSize({ width: w, height: h });
        await other.waitForTimeout(400);
        const q = await probe(other);
        expect(q.braidChart.xTicks.length).toBeGreaterThanOrEqual(2);
        expect(q.sphereChart.xTicks.length).toBeGreaterThanOrEqual(2);
        const boxes = await boxesOf(other, ['.panel.rate', '.panel.braid', '#sphere-panel', '.panel.budget', '.panel.flux', '.panel.map', '.panel.ledger', '.panel.alerts']);
        expect(overlaps(boxes)).toEqual([]);
        await other.screenshot({ path: join(shots, `fake-sun-${w}.png`), fullPage: true });
      }
    } finally {
      await other.close();
      await sunMonitor.close();
    }
  });

  it('lays out at 1280x800, 1920x1080 and 800 px wide (screenshots)', async () => {
    for (const [w, h] of [[1920, 1080], [800, 1000], [1280, 800]] as const) {
      await page.setViewportSize({ width: w, height: h });
      // Charts and the map follow their boxes after a resize.
      await page.waitForTimeout(400);
      const p = await probe(page);
      expect(p.map.axes.x.length).toBeGreaterThanOrEqual(3);
      expect(p.rateChart.xTicks.length).toBeGreaterThanOrEqual(2);
      expect(overlaps([...p.rateChart.markerBoxes, ...p.rateChart.labelBoxes])).toEqual([]);
      expect(overlaps([...p.budgetChart.markerBoxes, ...p.budgetChart.labelBoxes])).toEqual([]);
      expect(p.braidChart.xTicks.length).toBeGreaterThanOrEqual(2);
      expect(p.braidChart.yTicks.length).toBeGreaterThanOrEqual(2);
      expect(overlaps(await boxesOf(page, ['.panel.rate', '.panel.braid', '.panel.budget', '.panel.flux', '.panel.map', '.panel.ledger', '.panel.alerts']))).toEqual([]);
      await page.screenshot({ path: join(shots, `fake-demo-${w}.png`), fullPage: w === 800 });
    }
  });

  it('measures a 20,000-sample chart redraw and a 1024² map draw inside the page (reported)', async () => {
    const chart = (await page.evaluate('window.helicordProbe.measureChartRedraw(20000)')) as { fullUpdateMs: number; prepareMs: number; chartUpdateMs: number; redrawMs: number; pointsDrawn: number; runs: number[] };
    const map = (await page.evaluate('window.helicordProbe.measureMapDraw(1024)')) as { decodeMs: number; newFrameMs: number; redrawMs: number; runs: number[] };
    const lines = [
      `chart, 20,000 samples: update after a new sample ${chart.fullUpdateMs.toFixed(1)} ms (median of 10; merge + decimate + chart.js update), ` +
        `of which data preparation ${chart.prepareMs.toFixed(1)} ms and chart.js update ${chart.chartUpdateMs.toFixed(1)} ms; ` +
        `redraw ${chart.redrawMs.toFixed(1)} ms, ${chart.pointsDrawn} points drawn over 6 datasets`,
      `map 1024x1024: base64 decode ${map.decodeMs.toFixed(1)} ms, new frame (raster + draw) ${map.newFrameMs.toFixed(1)} ms (median of 5), ` +
        `highlight redraw ${map.redrawMs.toFixed(1)} ms`,
    ];
    lines.push(`machine load average while measuring: ${loadavg().map((x) => x.toFixed(1)).join(', ')} on ${cpus().length} cores`);
    process.stdout.write(`\n[dashboard performance, headless Chromium]\n  ${lines.join('\n  ')}\n`);
    writeFileSync(join(shots, 'performance.txt'), lines.join('\n') + '\n');
    // Points drawn stay bounded by the chart width, not the sample count.
    expect(chart.pointsDrawn).toBeLessThan(6 * 4 * 1280);
    expect(Number.isFinite(map.newFrameMs)).toBe(true);
  });

  it('logged no page errors and fetched nothing from outside', () => {
    expect(problems).toEqual([]);
    expect(foreign).toEqual([]);
  });
});
