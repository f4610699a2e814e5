// The Boundary map panel: the followed (latest) or picked frame with axes in Mm and a scale bar,
// the caption "frame N of T · time" and the patch centre in heliographic degrees when the series
// carries it, the hover readout of Bn and G_theta with units, the bn range and G_theta overlay
// controls, PNG and FITS exports.

import { byId } from '../dom.js';
import { frameIndex } from '../frameList.js';
import { frameNumberLabel } from '../ledgerCells.js';
import { MapLoader, type LoadedFrame } from '../mapLoader.js';
import { MapView, type MapProbe } from '../mapView.js';
import { normaliseFootpoints, normaliseTracks } from '../footpointShape.js';
import { touched, type PageState, type PageStore } from '../pageStore.js';
import { routes } from '../routes.js';
import { isoToMs } from '../seriesMerge.js';
import { formatGauss, formatSci, formatUtc, prettyUnit } from '../unitFormat.js';
import type { WireSample } from '../wire.js';

/** The patch centre in words: "centre 13.3° W, 18.5° S (Stonyhurst), 25° from disk centre". */
export function centreWords(s: Pick<WireSample, 'centre_lon_deg' | 'centre_lat_deg' | 'centre_disk_angle_deg'> | undefined): string {
  const lon = s?.centre_lon_deg;
  const lat = s?.centre_lat_deg;
  if (lon == null || lat == null || !Number.isFinite(lon) || !Number.isFinite(lat)) return '';
  const angle = s?.centre_disk_angle_deg;
  return `patch centre ${Math.abs(lon).toFixed(1)}° ${lon < 0 ? 'E' : 'W'}, ${Math.abs(lat).toFixed(1)}° ${lat < 0 ? 'S' : 'N'} (Stonyhurst heliographic)` +
    `${angle != null && Number.isFinite(angle) ? `, ${angle.toFixed(0)}° from disk centre` : ''}`;
}

/** The hover readout's lines. */
export function mapReadoutLines(p: MapProbe): string[] {
  return [
    `x ${p.xMm.toFixed(1)} Mm, y ${p.yMm.toFixed(1)} Mm`,
    ...(p.world ? [`${p.world.name} ${p.world.lon.toFixed(2)}°, ${p.world.lat >= 0 ? '+' : '−'}${Math.abs(p.world.lat).toFixed(2)}°`] : []),
    `Bn ${p.bn === null ? '— (no data)' : formatGauss(p.bn)}`,
    `G_θ ${p.gtheta === undefined ? 'loading…' : p.gtheta === null ? '— (no data)' : `${formatSci(p.gtheta, 3)} ${prettyUnit(p.gthetaUnit)}`}`,
  ];
}

export interface MapPanel {
  view: MapView;
}

export function mountMapPanel(store: PageStore): MapPanel {
  const view = new MapView(byId<HTMLCanvasElement>('map'), byId<HTMLCanvasElement>('map-bar'));
  const caption = byId('map-frame');
  const centre = byId('map-centre');
  const readout = byId('map-readout');
  const overlayBox = byId<HTMLInputElement>('overlay');
  const rangeSelect = byId<HTMLSelectElement>('map-range');
  const followButton = byId<HTMLButtonElement>('follow');
  const fits = byId<HTMLAnchorElement>('map-fits');
  let requested: string | undefined;
  let hoverAt: [number, number] | undefined;
  let gthetaAsked: string | undefined;

  const sampleOf = (s: Readonly<PageState>, frameId: string | number): { index: number; sample?: WireSample } => {
    const index = s.series.findIndex((p) => String(p.s.frame_id) === String(frameId));
    return { index, sample: s.series[index]?.s };
  };
  const captionFor = (s: Readonly<PageState>, frameId: string | number, time: number): string => {
    const { index, sample } = sampleOf(s, frameId);
    const replayTotal = s.status?.replay?.total ?? s.regions.find((r) => r.name === s.region)?.replay?.total;
    // Numbered among the stored frames once their list is in (a sample sits between two frames, so
    // the samples count one short); until then among the samples.
    const listed = s.frames.length >= s.series.length ? frameIndex(s.frames, frameId) : -1;
    const label = listed >= 0
      ? `${frameNumberLabel(listed, s.frames.length, replayTotal)} · ${formatUtc(time)}`
      : `${frameNumberLabel(index, s.series.length, replayTotal)} · ${formatUtc(time)}`;
    caption.textContent = label;
    caption.title = `stored frame id ${frameId}`;
    centre.textContent = centreWords(sample);
    return label;
  };

  const loader = new MapLoader(
    () => store.get().region,
    (f: LoadedFrame) => {
      const s = store.get();
      const time = isoToMs(f.footpoints.time) || s.series.find((p) => String(p.s.frame_id) === String(f.frameId))?.t || Number.NaN;
      const footpoints = normaliseFootpoints(f.footpoints.footpoints);
      view.setScene({ frameId: f.frameId, time, bn: f.bn, gtheta: f.gtheta, footpoints, tracks: normaliseTracks(f.footpoints.tracks) });
      view.setHighlight(s.selectedFootpoint);
      const label = captionFor(s, f.frameId, time);
      const region = s.region ?? 'region';
      fits.href = routes.mapsFits(region, f.frameId);
      fits.setAttribute('download', `${region}-frame-${f.frameId}-maps.fits`);
      fits.hidden = false;
      store.set({ shownFrame: { frameId: f.frameId, time, footpoints, label } });
      refreshReadout();
    },
    (frameId, message) => {
      caption.textContent = `frame ${frameId}: ${message}`;
    },
  );

  const wanted = (s: Readonly<PageState>): string | number | undefined =>
    s.follow ? s.latestFrame?.frame_id : s.series[s.pickedIndex]?.s.frame_id ?? undefined;

  const requestWanted = (force = false): void => {
    const s = store.get();
    const id = wanted(s);
    if (id === undefined) return;
    if (!force && requested === String(id)) return;
    requested = String(id);
    loader.request(id, s.overlay);
  };

  const refreshReadout = (): void => {
    if (!hoverAt) {
      readout.hidden = true;
      return;
    }
    const p = view.probeAt(hoverAt[0], hoverAt[1]);
    if (!p) {
      readout.hidden = true;
      return;
    }
    const frameId = view.currentFrameId();
    if (p.gtheta === undefined && frameId !== undefined && gthetaAsked !== String(frameId)) {
      gthetaAsked = String(frameId);
      void loader.gtheta(frameId).then((layer) => {
        if (layer) view.setGtheta(frameId, layer);
        refreshReadout();
      });
    }
    readout.textContent = mapReadoutLines(p).join('\n');
    readout.hidden = false;
    const canvas = view.canvas;
    const left = Math.min(canvas.clientWidth - readout.offsetWidth - 4, hoverAt[0] + 14);
    readout.style.left = `${Math.max(0, left)}px`;
    readout.style.top = `${Math.max(0, hoverAt[1] - readout.offsetHeight - 8)}px`;
  };
  view.canvas.addEventListener('mousemove', (ev) => {
    hoverAt = [ev.offsetX, ev.offsetY];
    refreshReadout();
  });
  view.canvas.addEventListener('mouseleave', () => {
    hoverAt = undefined;
    readout.hidden = true;
  });

  rangeSelect.addEventListener('change', () => view.setBnRange(rangeSelect.value === '' ? null : Number(rangeSelect.value)));
  overlayBox.addEventListener('change', () => store.set({ overlay: overlayBox.checked }));
  followButton.addEventListener('click', () => store.set({ follow: true, pickedIndex: -1 }));
  view.onPick = (id) => {
    store.set({ selectedFootpoint: id });
    if (id !== null) (document.querySelector(`#ledger tr[data-id="${CSS.escape(id)}"]`) as HTMLElement | null)?.scrollIntoView({ block: 'nearest' });
  };
  byId('map-png').addEventListener('click', async () => {
    const blob = await view.toPng();
    if (!blob) return;
    const url = URL.createObjectURL(blob);
    const a = document.createElement('a');
    a.href = url;
    a.download = `${store.get().region ?? 'region'}-frame-${view.currentFrameId() ?? 'none'}-map.png`;
    document.body.append(a);
    a.click();
    a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 10_000);
  });

  store.subscribe((s, changed) => {
    if (touched(changed, 'generation')) {
      loader.reset();
      requested = undefined;
      gthetaAsked = undefined;
      view.clear();
      caption.textContent = '';
      centre.textContent = '';
      fits.hidden = true;
    }
    if (touched(changed, 'generation', 'latestFrame', 'follow', 'pickedIndex')) requestWanted();
    if (touched(changed, 'follow')) followButton.hidden = s.follow;
    if (touched(changed, 'selectedFootpoint')) view.setHighlight(s.selectedFootpoint);
    if (touched(changed, 'overlay')) {
      view.setOverlay(s.overlay);
      // The switch takes effect at once on what is shown; the G_theta layer follows when loaded.
      if (s.overlay && !view.hasGtheta()) requestWanted(true);
    }
    if (touched(changed, 'status', 'series', 'frames') && view.hasScene()) {
      const id = view.currentFrameId();
      if (id !== undefined) captionFor(s, id, view.currentTime());
    }
  });
  window.addEventListener('resize', () => requestAnimationFrame(() => view.draw()));
  followButton.hidden = true;
  view.draw();
  return { view };
}
