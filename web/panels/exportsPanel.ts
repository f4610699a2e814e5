// The series exports in the header and the chart PNGs. With all of the series shown the CSV and
// JSON links are the monitor's export routes; with a range chosen they are written in the page
// from the samples of that range (same columns), and their names and titles say the range.

import type { Chart } from 'chart.js';
import { byId } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';
import { pointsInRange, rangeCsv, rangeJson } from '../rangeExport.js';
import { routes } from '../routes.js';
import { formatUtc } from '../unitFormat.js';
import { shownRange } from './chartView.js';

function download(href: string, name: string): void {
  const a = document.createElement('a');
  a.href = href;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
}

function stamp(ms: number): string {
  return new Date(ms).toISOString().slice(0, 16).replace(/[-:]/g, '').replace('T', '-');
}

export function mountExportsPanel(store: PageStore, charts: Record<'rate' | 'budget' | 'flux', Chart>): void {
  const csv = byId<HTMLAnchorElement>('export-csv');
  const json = byId<HTMLAnchorElement>('export-json');
  const ranged = (): { from: number; to: number } | undefined => {
    const s = store.get();
    if (s.view.kind === 'all') return undefined;
    const r = shownRange(s);
    return r ? { from: r[0], to: r[1] } : undefined;
  };
  const fileName = (kind: 'csv' | 'json'): string => {
    const r = ranged();
    const name = store.get().region ?? 'region';
    return r ? `${name}-series-${stamp(r.from)}-${stamp(r.to)}.${kind}` : `${name}-series.${kind}`;
  };
  const render = (): void => {
    const s = store.get();
    const r = ranged();
    // Nothing to export before a region is shown (an empty monitor).
    csv.hidden = !s.region;
    json.hidden = !s.region;
    csv.href = s.region ? routes.exportCsv(s.region) : '#';
    json.href = s.region ? routes.exportJson(s.region) : '#';
    csv.setAttribute('download', fileName('csv'));
    json.setAttribute('download', fileName('json'));
    csv.textContent = r ? 'Series CSV (range)' : 'Series CSV';
    json.textContent = r ? 'Series JSON (range)' : 'Series JSON';
    const title = r ? `the samples from ${formatUtc(r.from)} to ${formatUtc(r.to)} (the range shown)` : 'the whole series';
    csv.title = title;
    json.title = title;
  };
  const exportRange = (ev: MouseEvent, kind: 'csv' | 'json'): void => {
    const r = ranged();
    const s = store.get();
    if (!r || !s.region) return; // the whole series: the monitor's route
    ev.preventDefault();
    const points = pointsInRange(s.series, r.from, r.to);
    const text = kind === 'csv' ? rangeCsv(points) : rangeJson(s.region, points, s.gaps, r.from, r.to);
    const url = URL.createObjectURL(new Blob([text], { type: kind === 'csv' ? 'text/csv' : 'application/json' }));
    download(url, fileName(kind));
    setTimeout(() => URL.revokeObjectURL(url), 10_000);
  };
  csv.addEventListener('click', (ev) => exportRange(ev, 'csv'));
  json.addEventListener('click', (ev) => exportRange(ev, 'json'));
  for (const [kind, file] of [['rate', 'injection-rate'], ['budget', 'budget'], ['flux', 'flux']] as const) {
    byId(`${kind}-png`).addEventListener('click', () => {
      const r = ranged();
      const suffix = r ? `-${stamp(r.from)}-${stamp(r.to)}` : '';
      download(charts[kind].toBase64Image('image/png', 1), `${store.get().region ?? 'region'}-${file}${suffix}.png`);
    });
  }
  store.subscribe((_s, changed) => {
    if (touched(changed, 'region', 'view')) render();
  });
  render();
}
