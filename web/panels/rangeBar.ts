// The time range bar above the charts: the last 6 h or 24 h (following new samples), all, pan
// earlier/later by half the span, reset (all, following the newest frame), and the range in words.
// A range can also be dragged out on any chart.

import { byId } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';
import { ALL, lastHours, panView, viewLabel } from '../timeRange.js';
import { shownRange } from './chartView.js';

export function mountRangeBar(store: PageStore): void {
  const text = byId('range-text');
  const buttons: Record<string, HTMLButtonElement> = {
    '6h': byId<HTMLButtonElement>('range-6h'),
    '24h': byId<HTMLButtonElement>('range-24h'),
    all: byId<HTMLButtonElement>('range-all'),
    earlier: byId<HTMLButtonElement>('range-earlier'),
    later: byId<HTMLButtonElement>('range-later'),
    reset: byId<HTMLButtonElement>('range-reset'),
  };
  const pan = (fraction: number): void => {
    const s = store.get();
    const first = s.series[0]?.t;
    const last = s.series[s.series.length - 1]?.t;
    if (first === undefined || last === undefined) return;
    store.set({ view: panView(s.view, first, last, fraction) });
  };
  buttons['6h'].addEventListener('click', () => store.set({ view: lastHours(6) }));
  buttons['24h'].addEventListener('click', () => store.set({ view: lastHours(24) }));
  buttons.all.addEventListener('click', () => store.set({ view: ALL }));
  buttons.earlier.addEventListener('click', () => pan(-0.5));
  buttons.later.addEventListener('click', () => pan(0.5));
  buttons.reset.addEventListener('click', () => store.set({ view: ALL, follow: true, pickedIndex: -1 }));
  const render = (): void => {
    const s = store.get();
    const range = shownRange(s);
    text.textContent = `${viewLabel(s.view, range)} (data time)`;
    const first = s.series[0]?.t;
    const last = s.series[s.series.length - 1]?.t;
    const partial = range !== undefined && first !== undefined && last !== undefined && (range[0] > first || range[1] < last);
    buttons.earlier.disabled = !partial || (range !== undefined && first !== undefined && range[0] <= first);
    buttons.later.disabled = !partial || (range !== undefined && last !== undefined && range[1] >= last);
    for (const [key, b] of Object.entries(buttons)) {
      const on = (key === 'all' && s.view.kind === 'all') || (key === '6h' && s.view.kind === 'last' && s.view.spanMs === 6 * 3_600_000) ||
        (key === '24h' && s.view.kind === 'last' && s.view.spanMs === 24 * 3_600_000);
      b.setAttribute('aria-pressed', String(on));
    }
  };
  store.subscribe((_s, changed) => {
    if (touched(changed, 'view', 'series')) render();
  });
  render();
}
