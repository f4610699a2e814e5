// The Feed status line: link state, last frame, cadence, gaps, queue, latest rate, budget and flux,
// samples held, refusals (a list on click) and the raised/rising alert count.

import { getJson } from '../api.js';
import { byId, el } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';
import { routes } from '../routes.js';
import { isoToMs } from '../seriesMerge.js';
import { formatDuration, formatFlux, formatHelicity, formatRate, formatUtc } from '../unitFormat.js';

export function mountFeedPanel(store: PageStore): void {
  const text = byId('feed-text');
  const refusalsButton = byId<HTMLButtonElement>('refusals-button');
  const refusalsBox = byId('refusals');
  const count = byId<HTMLAnchorElement>('alert-count');

  const render = (): void => {
    const s = store.get();
    const st = s.status;
    const parts: string[] = [];
    if (s.regionsLoaded && s.regions.length === 0) {
      text.replaceChildren(el('span', { class: 'down', text: 'no region yet' }), ' · waiting for the first frame (see below how to send one)');
      refusalsButton.hidden = true;
      count.hidden = true;
      return;
    }
    const link = s.linkState;
    const linkText = link === 'live' ? 'live' : link === 'reconnecting' ? `reconnecting${s.retryInMs ? ` in ${Math.ceil(s.retryInMs / 1000)} s` : ''}` : link;
    if (st) {
      parts.push(`last frame ${formatUtc(st.last_frame_time ? isoToMs(st.last_frame_time) : Number.NaN)}`);
      parts.push(`cadence ${formatDuration(st.cadence_s)}`);
      parts.push(`${st.gaps} gap${st.gaps === 1 ? '' : 's'}`);
      parts.push(st.queue_limit ? `queue ${st.queue} of ${st.queue_limit}${st.queue >= st.queue_limit ? ' (full: senders wait)' : ''}` : `queue ${st.queue}`);
      if (st.disk_full) parts.push('disk full: frames wait for space');
    }
    const latest = s.series[s.series.length - 1]?.s;
    if (latest) {
      parts.push(`latest rate ${formatRate(latest.rate_total)}, budget ${formatHelicity(latest.budget_total)}`);
      // The unsigned flux and the budget over its square, when the series carries them.
      if (latest.flux_unsigned != null) {
        const norm = latest.budget_normalised != null ? `, H/Φ² ${latest.budget_normalised.toPrecision(2)}` : '';
        parts.push(`unsigned flux ${formatFlux(latest.flux_unsigned)}${norm}`);
      }
    }
    parts.push(`${s.series.length} samples`);
    text.replaceChildren(el('span', { class: link === 'live' ? 'live' : 'down', text: linkText }), ` · ${parts.join(' · ')}`);
    const raised = s.alerts.filter((a) => a.state === 'raised').length;
    const rising = s.alerts.filter((a) => a.state === 'rising').length;
    count.hidden = raised + rising === 0;
    count.textContent = [raised ? `${raised} alert${raised === 1 ? '' : 's'} raised` : '', rising ? `${rising} rising` : ''].filter(Boolean).join(', ');
    const refusals = st?.refusals ?? 0;
    refusalsButton.hidden = !s.region;
    refusalsButton.textContent = `${refusals} refusal${refusals === 1 ? '' : 's'}`;
  };

  refusalsButton.addEventListener('click', async () => {
    if (!refusalsBox.hidden) {
      refusalsBox.hidden = true;
      return;
    }
    const region = store.get().region;
    if (!region) return;
    refusalsBox.hidden = false;
    refusalsBox.textContent = 'loading…';
    try {
      const a = await getJson<{ refusals: { time_received: string; source: string; reason: string; field: string }[] }>(routes.refusals(region));
      refusalsBox.replaceChildren(
        a.refusals.length === 0
          ? el('span', { text: 'no frame refused' })
          : el('ul', {}, ...a.refusals.map((r) => el('li', { text: `${formatUtc(isoToMs(r.time_received))} (wall clock, on arrival) · ${r.source} · ${r.field}: ${r.reason}` }))),
      );
    } catch (err) {
      refusalsBox.textContent = (err as Error).message;
    }
  });

  store.subscribe((_s, changed) => {
    if (touched(changed, 'status', 'series', 'alerts', 'linkState', 'retryInMs', 'regions', 'regionsLoaded', 'region')) render();
  });
  render();
}
