// The dashboard: one region at a time. Series, alerts and status come through the viewer socket
// (snapshot, then live messages, backfill after every reconnect) on top of one HTTP fetch of the
// full series; the map panel loads the frame that is followed (the latest) or picked on a chart.

import type { Chart } from 'chart.js';
import { ApiError, getJson, postJson } from './api.js';
import { AlertLog } from './alertLog.js';
import { budgetThresholds, mergeAlerts, raisedMoments, rateThresholds } from './alertMarks.js';
import { chartMarks, createSeriesChart, readoutLines, setSeriesData, timeAtPixel, type ChartKind } from './charts.js';
import { byId, el } from './dom.js';
import { decodeFloat32Base64 } from './float32Base64.js';
import { normaliseFootpoints, normaliseTracks } from './footpointShape.js';
import { Ledger } from './ledger.js';
import { frameNumberLabel, provenanceLine } from './ledgerCells.js';
import { MapView, type MapLayer, type MapScene } from './mapView.js';
import { measureChartRedraw, measureMapDraw } from './pagePerformance.js';
import { isRegionName, routes } from './routes.js';
import { applySnapshot, backfillSince, isoToMs, mergeGaps, mergeSamples, nearestIndex, type GapSpan, type SeriesPoint } from './seriesMerge.js';
import { tokenStore } from './tokenStore.js';
import { formatDuration, formatFlux, formatHelicity, formatRate, formatUtc } from './unitFormat.js';
import { ViewerLink, type LinkState } from './viewerSocket.js';
import type {
  FeedStatus, FootpointsAnswer, LatestFrame, MapAnswer, RegionInfo, ReplayInfo, ViewerMessage, WireAlert, WireGap, WireSample,
} from './wire.js';

interface PageState {
  regions: RegionInfo[];
  region?: string;
  /** Bumped on every region switch; answers for an older generation are dropped. */
  generation: number;
  series: SeriesPoint[];
  gaps: GapSpan[];
  alerts: WireAlert[];
  status?: FeedStatus;
  latestFrame?: LatestFrame;
  /** Follow the newest frame on the map, or stay on the picked one. */
  follow: boolean;
  pickedIndex: number;
  selectedFootpoint: string | null;
  link?: ViewerLink;
  linkState: LinkState;
  retryInMs?: number;
  framesSeen: number;
  ackMessage?: { id: string | number; text: string };
}

const state: PageState = {
  regions: [], generation: 0, series: [], gaps: [], alerts: [], follow: true, pickedIndex: -1,
  selectedFootpoint: null, linkState: 'connecting', framesSeen: 0,
};

// --- elements and panels -------------------------------------------------------------------------
const regionSelect = byId<HTMLSelectElement>('region');
const feedText = byId('feed-text');
const refusalsButton = byId<HTMLButtonElement>('refusals-button');
const refusalsBox = byId('refusals');
const charts: Record<ChartKind, Chart<'line', { x: number; y: number | null }[]>> = {
  rate: createSeriesChart(byId<HTMLCanvasElement>('rate-chart'), 'rate'),
  budget: createSeriesChart(byId<HTMLCanvasElement>('budget-chart'), 'budget'),
};
const readouts: Record<ChartKind, HTMLElement> = { rate: byId('rate-readout'), budget: byId('budget-readout') };
const mapView = new MapView(byId<HTMLCanvasElement>('map'), byId<HTMLCanvasElement>('map-bar'));
const ledger = new Ledger(byId<HTMLTableElement>('ledger'), byId('ledger-caption'));
const alertLog = new AlertLog(byId('alerts'));
const overlayBox = byId<HTMLInputElement>('overlay');
const followButton = byId<HTMLButtonElement>('follow');
const mapFrameText = byId('map-frame');
/** The replay state last shown, so the map caption counts frames against the same total. */
let lastReplay: ReplayInfo | null = null;

/** The map caption, "frame 5 of 361 · time": the frame's place in the series, the count the
 *  replay bar uses too; the store's frame id is on hover. Returns the label. */
function mapCaption(frameId: string | number, time: number): string {
  const index = state.series.findIndex((p) => String(p.s.frame_id) === String(frameId));
  const label = `${frameNumberLabel(index, state.series.length, lastReplay?.total)} · ${formatUtc(time)}`;
  mapFrameText.textContent = label;
  mapFrameText.title = `stored frame id ${frameId}`;
  return label;
}
const mapFits = byId<HTMLAnchorElement>('map-fits');

// --- region choice -------------------------------------------------------------------------------
/** Set when the monitor refused to answer reads without the token; the socket then carries it too. */
let readProtected = false;

function regionFromHash(): string | undefined {
  const m = /region=([^&]+)/.exec(location.hash);
  const name = m ? decodeURIComponent(m[1]) : undefined;
  return name && isRegionName(name) ? name : undefined;
}

async function loadRegions(): Promise<void> {
  try {
    const answer = await getJson<{ regions: RegionInfo[] }>(routes.regions());
    state.regions = answer.regions ?? [];
  } catch (err) {
    if (err instanceof ApiError && err.status === 401) {
      // Reading is protected on this monitor: the token is needed to see anything.
      readProtected = true;
      byId('region-note').textContent = 'this monitor needs the token for reading';
      tokenStore.clear();
      askToken(() => void loadRegions());
      return;
    }
    byId('region-note').textContent = `regions unavailable: ${(err as Error).message}`;
    if (!state.region) setTimeout(() => void loadRegions(), 3000);
    return;
  }
  const current = regionSelect.value;
  regionSelect.replaceChildren(
    ...state.regions.map((r) => el('option', { value: r.name, text: `${r.name}${r.replay ? ' (replay)' : ''}` })),
  );
  if (state.regions.length === 0) {
    regionSelect.append(el('option', { value: '', text: 'no region yet' }));
    byId('region-note').textContent = 'waiting for the first frame';
    setTimeout(() => void loadRegions(), 3000);
    return;
  }
  byId('region-note').textContent = '';
  const wanted = state.region ?? regionFromHash() ?? (current || undefined);
  const pick = state.regions.find((r) => r.name === wanted)?.name ?? state.regions.find((r) => r.name === 'demo')?.name ?? state.regions[0].name;
  regionSelect.value = pick;
  if (pick !== state.region) openRegion(pick);
}

regionSelect.addEventListener('change', () => {
  if (regionSelect.value) openRegion(regionSelect.value);
});

function openRegion(name: string): void {
  state.link?.close();
  state.generation++;
  Object.assign(state, {
    region: name, series: [], gaps: [], alerts: [], status: undefined, latestFrame: undefined, follow: true,
    pickedIndex: -1, selectedFootpoint: null, framesSeen: 0, ackMessage: undefined,
  });
  history.replaceState(null, '', `#region=${encodeURIComponent(name)}`);
  byId<HTMLAnchorElement>('export-csv').href = routes.exportCsv(name);
  byId<HTMLAnchorElement>('export-json').href = routes.exportJson(name);
  byId<HTMLAnchorElement>('export-csv').setAttribute('download', `${name}-series.csv`);
  byId<HTMLAnchorElement>('export-json').setAttribute('download', `${name}-series.json`);
  mapLoader.reset();
  mapView.clear();
  renderAll();
  const generation = state.generation;
  // The full history over HTTP; the socket's snapshot and live samples merge into it.
  getJson<{ samples: WireSample[]; gaps: WireGap[] }>(routes.series(name))
    .then((answer) => {
      if (generation !== state.generation) return;
      addSamples(answer.samples ?? []);
      state.gaps = mergeGaps(state.gaps, answer.gaps ?? []);
      scheduleCharts();
      renderFeed();
    })
    .catch(() => {
      /* the snapshot still brings the recent samples */
    });
  state.link = new ViewerLink({
    region: name,
    // Only a monitor that protects reading gets the token in the socket URL.
    token: readProtected ? tokenStore.get() : undefined,
    onMessage: (m) => {
      if (generation === state.generation) onViewerMessage(m);
    },
    onState: (s, detail) => {
      if (generation !== state.generation) return;
      state.linkState = s;
      state.retryInMs = detail.retryInMs;
      renderFeed();
    },
    backfillSince: () => backfillSince(state.series),
  });
}

// --- live messages -------------------------------------------------------------------------------
function addSamples(samples: readonly WireSample[]): void {
  if (samples.length === 0) return;
  const pickedT = state.pickedIndex >= 0 ? state.series[state.pickedIndex]?.t : undefined;
  state.series = mergeSamples(state.series, samples);
  if (pickedT !== undefined) state.pickedIndex = nearestIndex(state.series, pickedT);
}

function onViewerMessage(m: ViewerMessage): void {
  switch (m.type) {
    case 'snapshot': {
      // Authoritative over its span: after a rewind the monitor resends one.
      const pickedT = state.pickedIndex >= 0 ? state.series[state.pickedIndex]?.t : undefined;
      state.series = applySnapshot(state.series, m.samples ?? []);
      if (pickedT !== undefined) state.pickedIndex = nearestIndex(state.series, pickedT);
      state.gaps = mergeGaps([], m.gaps ?? []);
      state.alerts = mergeAlerts([], m.alerts ?? []);
      state.status = m.status;
      if (m.latest_frame) onFrame(m.latest_frame);
      renderAlerts();
      renderFeed();
      scheduleCharts();
      break;
    }
    case 'sample':
      addSamples([m.sample]);
      scheduleCharts();
      renderFeed();
      break;
    case 'backfill': {
      const samples = m.samples ?? [];
      addSamples(samples);
      // The monitor answers in pages: ask for the next one from the last sample of this one.
      const last = samples[samples.length - 1];
      if (m.more && last) state.link?.send({ type: 'backfill', since: last.time });
      scheduleCharts();
      renderFeed();
      break;
    }
    case 'alert':
      state.alerts = mergeAlerts(state.alerts, [m.alert]);
      renderAlerts();
      scheduleCharts();
      break;
    case 'frame':
      state.framesSeen++;
      onFrame({ frame_id: m.frame_id, time: m.time });
      break;
    case 'status':
      state.status = m.status;
      renderFeed();
      break;
  }
}

function onFrame(frame: LatestFrame): void {
  state.latestFrame = frame;
  if (state.follow) mapLoader.request(frame.frame_id);
  renderFeed();
}

// --- charts --------------------------------------------------------------------------------------
let chartsPending = false;

function scheduleCharts(): void {
  if (chartsPending) return;
  chartsPending = true;
  requestAnimationFrame(() => {
    chartsPending = false;
    drawCharts();
  });
}

function drawCharts(): void {
  const s = state.series;
  byId('rate-provenance').textContent = provenanceLine(s.at(-1)?.s);
  const range: [number, number] | undefined = s.length > 0 ? [s[0].t, s[s.length - 1].t] : undefined;
  const moments = raisedMoments(state.alerts);
  const picked = state.pickedIndex >= 0 ? s[state.pickedIndex]?.t : undefined;
  for (const kind of ['rate', 'budget'] as const) {
    const chart = charts[kind];
    const m = chartMarks(chart);
    m.gaps = state.gaps;
    m.thresholds = kind === 'budget' ? budgetThresholds(state.alerts) : rateThresholds(state.alerts);
    m.moments = moments;
    m.cursor = picked;
    setSeriesData(chart, kind, s, state.gaps, Math.max(50, Math.round(chart.chartArea?.width ?? chart.width)), range);
  }
}

function showReadout(kind: ChartKind, index: number, offsetX?: number): void {
  const p = state.series[index];
  const box = readouts[kind];
  if (!p) {
    box.hidden = true;
    return;
  }
  box.textContent = readoutLines(kind, p.s, p.t).join('\n');
  box.hidden = false;
  const chart = charts[kind];
  const x = offsetX ?? chart.scales.x.getPixelForValue(p.t);
  const w = box.offsetWidth;
  box.style.left = `${Math.max(0, Math.min(chart.width - w - 4, x + 12))}px`;
  box.style.top = `${(chart.chartArea?.top ?? 0) + 16}px`;
}

function setHover(t: number | undefined): void {
  for (const kind of ['rate', 'budget'] as const) {
    chartMarks(charts[kind]).hover = t;
    charts[kind].draw();
  }
}

function pickIndex(index: number): void {
  const p = state.series[index];
  if (!p) return;
  state.pickedIndex = index;
  state.follow = false;
  mapLoader.request(p.s.frame_id);
  for (const kind of ['rate', 'budget'] as const) {
    chartMarks(charts[kind]).cursor = p.t;
    charts[kind].draw();
  }
  renderFollow();
}

function followLatest(): void {
  state.follow = true;
  state.pickedIndex = -1;
  for (const kind of ['rate', 'budget'] as const) {
    chartMarks(charts[kind]).cursor = undefined;
    charts[kind].draw();
  }
  if (state.latestFrame) mapLoader.request(state.latestFrame.frame_id);
  renderFollow();
}

for (const kind of ['rate', 'budget'] as const) {
  const canvas = charts[kind].canvas;
  canvas.addEventListener('mousemove', (ev) => {
    const t = timeAtPixel(charts[kind], ev.offsetX, ev.offsetY);
    const i = t === undefined ? -1 : nearestIndex(state.series, t);
    if (i < 0) {
      readouts[kind].hidden = true;
      setHover(undefined);
      return;
    }
    setHover(state.series[i].t);
    showReadout(kind, i, ev.offsetX);
  });
  canvas.addEventListener('mouseleave', () => {
    readouts[kind].hidden = true;
    setHover(undefined);
  });
  canvas.addEventListener('click', (ev) => {
    const t = timeAtPixel(charts[kind], ev.offsetX, ev.offsetY);
    if (t === undefined) return; // the legend handles its own clicks
    pickIndex(nearestIndex(state.series, t));
  });
  canvas.addEventListener('keydown', (ev) => {
    const n = state.series.length;
    if (n === 0) return;
    const cur = state.pickedIndex >= 0 ? state.pickedIndex : n - 1;
    const step = ev.shiftKey ? 10 : 1;
    let next: number | undefined;
    if (ev.key === 'ArrowLeft') next = Math.max(0, cur - step);
    else if (ev.key === 'ArrowRight') next = Math.min(n - 1, cur + step);
    else if (ev.key === 'Home') next = 0;
    else if (ev.key === 'End') next = n - 1;
    else if (ev.key === 'Escape') {
      followLatest();
      readouts[kind].hidden = true;
      return;
    }
    if (next === undefined) return;
    ev.preventDefault();
    pickIndex(next);
    showReadout(kind, next);
  });
  canvas.addEventListener('blur', () => {
    readouts[kind].hidden = true;
  });
}

followButton.addEventListener('click', followLatest);

function renderFollow(): void {
  followButton.hidden = state.follow;
}

// --- the map -------------------------------------------------------------------------------------
/** Loads frames for the map one at a time; while one loads, only the newest request waits. */
class MapLoader {
  private busy = false;
  private pending: string | number | undefined;
  private cache = new Map<string, MapLayer | FootpointsAnswer>();

  reset(): void {
    this.pending = undefined;
    this.cache.clear();
  }

  request(frameId: string | number): void {
    if (this.busy) {
      this.pending = frameId;
      return;
    }
    void this.load(frameId);
  }

  private remember<T extends MapLayer | FootpointsAnswer>(key: string, value: T): T {
    this.cache.set(key, value);
    while (this.cache.size > 12) this.cache.delete(this.cache.keys().next().value as string);
    return value;
  }

  private async layer(region: string, frameId: string | number, layer: 'bn' | 'gtheta'): Promise<MapLayer> {
    const key = `${frameId}|${layer}`;
    const hit = this.cache.get(key) as MapLayer | undefined;
    if (hit) return hit;
    const a = await getJson<MapAnswer>(routes.map(region, frameId, layer));
    const data = decodeFloat32Base64(a.data, a.nx * a.ny, `map ${layer} of frame ${frameId}`);
    return this.remember(key, { data, nx: a.nx, ny: a.ny, dx: a.dx, dy: a.dy, unit: a.unit });
  }

  private async footpoints(region: string, frameId: string | number): Promise<FootpointsAnswer> {
    const key = `${frameId}|footpoints`;
    const hit = this.cache.get(key) as FootpointsAnswer | undefined;
    if (hit) return hit;
    return this.remember(key, await getJson<FootpointsAnswer>(routes.footpoints(region, frameId)));
  }

  private async load(frameId: string | number): Promise<void> {
    const region = state.region;
    if (!region) return;
    const generation = state.generation;
    this.busy = true;
    try {
      const [bn, fps, gtheta] = await Promise.all([
        this.layer(region, frameId, 'bn'),
        this.footpoints(region, frameId).catch(() => ({ frame_id: frameId, time: '', footpoints: [], tracks: {} }) as FootpointsAnswer),
        overlayBox.checked ? this.layer(region, frameId, 'gtheta').catch(() => undefined) : Promise.resolve(undefined),
      ]);
      if (generation !== state.generation) return;
      const time = isoToMs(fps.time) || state.series.find((p) => String(p.s.frame_id) === String(frameId))?.t || Number.NaN;
      const scene: MapScene = { frameId, time, bn, gtheta, footpoints: normaliseFootpoints(fps.footpoints), tracks: normaliseTracks(fps.tracks) };
      mapView.setScene(scene);
      mapView.setHighlight(state.selectedFootpoint);
      const label = mapCaption(frameId, time);
      ledger.setRows(scene.footpoints, `${scene.footpoints.length} footpoints · ${label}`);
      ledger.select(state.selectedFootpoint);
      mapFits.href = routes.mapsFits(region, frameId);
      mapFits.setAttribute('download', `${region}-frame-${frameId}-maps.fits`);
      mapFits.hidden = false;
    } catch (err) {
      if (generation === state.generation) mapFrameText.textContent = `frame ${frameId}: ${(err as Error).message}`;
    } finally {
      this.busy = false;
      const next = this.pending;
      this.pending = undefined;
      // reset() drops what was pending at a region switch, so anything pending now is current.
      if (next !== undefined) this.request(next);
    }
  }
}
const mapLoader = new MapLoader();

const mapRange = byId<HTMLSelectElement>('map-range');
mapRange.addEventListener('change', () => mapView.setBnRange(mapRange.value === '' ? null : Number(mapRange.value)));

overlayBox.addEventListener('change', () => {
  // The switch takes effect at once on what is shown; the G_theta layer follows when loaded.
  mapView.setOverlay(overlayBox.checked);
  const id = mapView.currentFrameId();
  if (overlayBox.checked && id !== undefined) mapLoader.request(id);
});

function selectFootpoint(id: string | null): void {
  state.selectedFootpoint = id;
  mapView.setHighlight(id);
  ledger.select(id);
}
ledger.onSelect = selectFootpoint;
mapView.onPick = (id) => {
  selectFootpoint(id);
  if (id !== null) (document.querySelector(`#ledger tr[data-id="${CSS.escape(id)}"]`) as HTMLElement | null)?.scrollIntoView({ block: 'nearest' });
};

// --- alerts and the token ------------------------------------------------------------------------
const tokenDialog = byId<HTMLDialogElement>('token-dialog');
const tokenInput = byId<HTMLInputElement>('token-input');
let afterToken: (() => void) | undefined;

function askToken(then?: () => void): void {
  afterToken = then;
  tokenInput.value = '';
  if (!tokenDialog.open) tokenDialog.showModal();
  tokenInput.focus();
}
byId('token-button').addEventListener('click', () => askToken());
byId('token-form').addEventListener('submit', () => {
  const t = tokenInput.value.trim();
  if (t) tokenStore.set(t);
  const next = afterToken;
  afterToken = undefined;
  if (t && next) setTimeout(next, 0);
});
byId('token-forget').addEventListener('click', () => {
  tokenStore.clear();
  afterToken = undefined;
  tokenDialog.close();
});
byId('token-cancel').addEventListener('click', () => {
  afterToken = undefined;
  tokenDialog.close();
});

/** Runs an action that needs the token; asks for it first when none is kept, again after a 401. */
function withToken(action: () => Promise<void>, onRefused: (text: string) => void): void {
  if (!tokenStore.get()) {
    askToken(() => withToken(action, onRefused));
    return;
  }
  action().catch((err: unknown) => {
    if (err instanceof ApiError && err.status === 401) {
      tokenStore.clear();
      onRefused('the token was refused; enter it again');
      askToken(() => withToken(action, onRefused));
    } else onRefused((err as Error).message);
  });
}

alertLog.onAcknowledge = (alert) => {
  const region = state.region;
  if (!region) return;
  withToken(
    async () => {
      const answer = await postJson<WireAlert | { alert: WireAlert }>(routes.ack(region, alert.id), {});
      const updated = 'alert' in answer && typeof answer.alert === 'object' ? answer.alert : (answer as WireAlert);
      state.alerts = mergeAlerts(state.alerts, [{ ...alert, ...updated, acknowledged: updated.acknowledged ?? true }]);
      state.ackMessage = undefined;
      renderAlerts();
    },
    (text) => {
      state.ackMessage = { id: alert.id, text };
      renderAlerts();
    },
  );
};

function renderAlerts(): void {
  alertLog.render(state.alerts, state.ackMessage);
  renderFeed();
}

// --- feed status and replay ----------------------------------------------------------------------
function renderFeed(): void {
  const st = state.status;
  const parts: string[] = [];
  const link = state.linkState;
  const linkText =
    link === 'live' ? 'live' : link === 'reconnecting' ? `reconnecting${state.retryInMs ? ` in ${Math.ceil(state.retryInMs / 1000)} s` : ''}` : link;
  if (st) {
    const last = st.last_frame_time ? isoToMs(st.last_frame_time) : Number.NaN;
    parts.push(`last frame ${formatUtc(last)}`);
    parts.push(`cadence ${formatDuration(st.cadence_s)}`);
    parts.push(`${st.gaps} gap${st.gaps === 1 ? '' : 's'}`);
    parts.push(st.queue_limit ? `queue ${st.queue} of ${st.queue_limit}${st.queue >= st.queue_limit ? ' (full: senders wait)' : ''}` : `queue ${st.queue}`);
    if (st.disk_full) parts.push('disk full: frames wait for space');
  }
  const latest = state.series[state.series.length - 1]?.s;
  if (latest) {
    parts.push(`latest rate ${formatRate(latest.rate_total)}, budget ${formatHelicity(latest.budget_total)}`);
    // The unsigned flux and the budget over its square, when the series carries them.
    if (latest.flux_unsigned != null) {
      const norm = latest.budget_normalised != null ? `, H/Φ² ${latest.budget_normalised.toPrecision(2)}` : '';
      parts.push(`unsigned flux ${formatFlux(latest.flux_unsigned)}${norm}`);
    }
  }
  parts.push(`${state.series.length} samples`);
  feedText.replaceChildren(el('span', { class: link === 'live' ? 'live' : 'down', text: linkText }), ` · ${parts.join(' · ')}`);
  const raised = state.alerts.filter((a) => a.state === 'raised').length;
  const rising = state.alerts.filter((a) => a.state === 'rising').length;
  const count = byId<HTMLAnchorElement>('alert-count');
  count.hidden = raised + rising === 0;
  count.textContent = [raised ? `${raised} alert${raised === 1 ? '' : 's'} raised` : '', rising ? `${rising} rising` : ''].filter(Boolean).join(', ');
  const refusals = st?.refusals ?? 0;
  refusalsButton.hidden = false;
  refusalsButton.textContent = `${refusals} refusal${refusals === 1 ? '' : 's'}`;
  renderReplay(st?.replay ?? state.regions.find((r) => r.name === state.region)?.replay ?? null);
}

refusalsButton.addEventListener('click', async () => {
  if (!refusalsBox.hidden) {
    refusalsBox.hidden = true;
    return;
  }
  const region = state.region;
  if (!region) return;
  refusalsBox.hidden = false;
  refusalsBox.textContent = 'loading…';
  try {
    const a = await getJson<{ refusals: { time_received: string; source: string; reason: string; field: string }[] }>(routes.refusals(region));
    refusalsBox.replaceChildren(
      a.refusals.length === 0
        ? el('span', { text: 'no frame refused' })
        : el('ul', {}, ...a.refusals.map((r) => el('li', { text: `${formatUtc(isoToMs(r.time_received))} · ${r.source} · ${r.field}: ${r.reason}` }))),
    );
  } catch (err) {
    refusalsBox.textContent = (err as Error).message;
  }
});

const replayBox = byId('replay');
const replaySeek = byId<HTMLInputElement>('replay-seek');
const replaySpeed = byId<HTMLSelectElement>('replay-speed');
let seeking = false;

function renderReplay(r: ReplayInfo | null): void {
  const totalChanged = (lastReplay?.total ?? null) !== (r?.total ?? null);
  lastReplay = r;
  const shown = mapView.currentFrameId();
  if (totalChanged && shown !== undefined) mapCaption(shown, mapView.currentTime());
  replayBox.hidden = r === null;
  if (!r) return;
  if (!seeking) {
    replaySeek.max = String(Math.max(0, r.total - 1));
    replaySeek.value = String(r.position);
  }
  if (document.activeElement !== replaySpeed) {
    // A speed set elsewhere (the command line, the API) that the menu does not list joins it.
    const value = String(r.speed);
    if (![...replaySpeed.options].some((o) => o.value === value)) {
      const option = document.createElement('option');
      option.value = value;
      option.textContent = `×${r.speed}`;
      replaySpeed.insertBefore(option, [...replaySpeed.options].find((o) => Number(o.value) > r.speed || o.value === '0') ?? null);
    }
    replaySpeed.value = value;
  }
  byId('replay-text').textContent = `${r.state} · frame ${Math.min(r.position, r.total)} of ${r.total} · ${r.speed === 0 ? 'as fast as possible' : `×${r.speed}`}`;
  byId<HTMLButtonElement>('replay-play').disabled = r.state === 'playing';
  byId<HTMLButtonElement>('replay-pause').disabled = r.state !== 'playing';
}

function replayAction(action: 'pause' | 'resume' | 'seek' | 'speed', value?: number | string): void {
  const region = state.region;
  if (!region) return;
  withToken(
    async () => {
      await postJson(routes.replay(region), value === undefined ? { action } : { action, value });
    },
    (text) => {
      byId('replay-text').textContent = text;
    },
  );
}
byId('replay-play').addEventListener('click', () => replayAction('resume'));
byId('replay-pause').addEventListener('click', () => replayAction('pause'));
replaySpeed.addEventListener('change', () => replayAction('speed', Number(replaySpeed.value)));
replaySeek.addEventListener('input', () => {
  seeking = true;
});
replaySeek.addEventListener('change', () => {
  seeking = false;
  replayAction('seek', Number(replaySeek.value));
});

// --- exports -------------------------------------------------------------------------------------
function download(href: string, name: string): void {
  const a = el('a', { href, download: name });
  document.body.append(a);
  a.click();
  a.remove();
}
for (const kind of ['rate', 'budget'] as const) {
  byId(`${kind}-png`).addEventListener('click', () => {
    download(charts[kind].toBase64Image('image/png', 1), `${state.region ?? 'region'}-${kind === 'rate' ? 'injection-rate' : 'budget'}.png`);
  });
}
byId('map-png').addEventListener('click', async () => {
  const blob = await mapView.toPng();
  if (!blob) return;
  const url = URL.createObjectURL(blob);
  download(url, `${state.region ?? 'region'}-frame-${mapView.currentFrameId() ?? 'none'}-map.png`);
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
});

// --- layout --------------------------------------------------------------------------------------
function renderAll(): void {
  renderFeed();
  renderAlerts();
  renderFollow();
  ledger.setRows([], 'no frame yet');
  mapFrameText.textContent = '';
  mapFits.hidden = true;
  scheduleCharts();
}

let resizeTimer: ReturnType<typeof setTimeout> | undefined;
window.addEventListener('resize', () => {
  clearTimeout(resizeTimer);
  resizeTimer = setTimeout(() => {
    mapView.draw();
    scheduleCharts();
  }, 100);
});

// --- what the browser tests read (and anyone curious in the console) -------------------------------
declare global {
  interface Window {
    helicordProbe: unknown;
  }
}
window.helicordProbe = {
  state: () => ({
    region: state.region,
    samples: state.series.length,
    lastSampleTime: state.series.length > 0 ? state.series[state.series.length - 1].s.time : null,
    alerts: state.alerts.map((a) => ({ id: a.id, rule: a.rule, state: a.state, acknowledged: a.acknowledged })),
    link: state.linkState,
    linkOpens: state.link?.opens ?? 0,
    follow: state.follow,
    mapFrame: mapView.currentFrameId() ?? null,
    selectedFootpoint: state.selectedFootpoint,
    map: { ...mapView.report, colourBar: mapView.colourBarUnit(), colourLimit: mapView.colourLimit(), bnRange: mapView.bnRange() },
    rateChart: { ...chartMarks(charts.rate).drawn, points: charts.rate.data.datasets[2].data.length },
    budgetChart: {
      ...chartMarks(charts.budget).drawn,
      thresholds: chartMarks(charts.budget).thresholds.map((t) => t.value),
      points: charts.budget.data.datasets[2].data.length,
    },
  }),
  measureChartRedraw: (samples = 20_000) => measureChartRedraw(charts.rate.canvas, samples),
  measureMapDraw: (size = 1024) => measureMapDraw(mapView.canvas, mapView.bar, size),
};

renderAll();
void loadRegions();
// New regions appear (first frame of a new upload); keep the picker current.
setInterval(() => void loadRegions(), 30_000);
