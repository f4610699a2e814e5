// The Alert log: each rule's alert with its state in words (never colour alone), when it changed,
// the evidence, the published source of its threshold, and an acknowledge button.

import { el } from './dom.js';
import { isoToMs } from './seriesMerge.js';
import { formatSci, formatUtc, prettyUnit } from './unitFormat.js';
import type { AlertState, WireAlert } from './wire.js';

const STATE_MARK: Record<AlertState, string> = { quiet: '○', rising: '◔', raised: '●', settled: '◌' };

export class AlertLog {
  onAcknowledge: ((alert: WireAlert) => void) | undefined;

  constructor(private readonly list: HTMLElement) {}

  render(alerts: readonly WireAlert[], message?: { id: string | number; text: string }): void {
    this.list.replaceChildren();
    if (alerts.length === 0) {
      this.list.append(el('li', { class: 'empty', text: 'no alerts for this region yet' }));
      return;
    }
    // Raised first, then rising, settled, quiet; newest first inside each.
    const order: Record<AlertState, number> = { raised: 0, rising: 1, settled: 2, quiet: 3 };
    const sorted = alerts.slice().sort((a, b) => order[a.state] - order[b.state] || isoToMs(b.since) - isoToMs(a.since));
    for (const a of sorted) {
      const unit = prettyUnit(a.unit ?? '');
      const ev = a.evidence ?? {};
      const evidence: string[] = [];
      const sigma = typeof ev.sigma === 'number' && Number.isFinite(ev.sigma) ? ` ± ${formatSci(ev.sigma, 2)}` : '';
      if (typeof ev.value === 'number') evidence.push(`value ${formatSci(ev.value, 3)}${sigma} ${unit}`);
      if (a.threshold !== null && Number.isFinite(a.threshold)) evidence.push(`threshold ${formatSci(a.threshold, 2)} ${unit}`);
      if (ev.window_from && ev.window_to) evidence.push(`window ${formatUtc(isoToMs(ev.window_from), false)} – ${formatUtc(isoToMs(ev.window_to), false)}`);
      for (const [k, v] of Object.entries(ev)) {
        if (k === 'value' || k === 'window_from' || k === 'window_to' || k === 'sigma') continue;
        if (k === 'threshold' && a.threshold !== null) continue;
        if (typeof v === 'number') evidence.push(`${k.replace(/_/g, ' ')} ${formatSci(v, 3)}`);
        else if (typeof v === 'string' || typeof v === 'boolean') evidence.push(`${k.replace(/_/g, ' ')} ${v}`);
      }
      const ack = el('button', {
        type: 'button', class: 'ack', 'data-alert': String(a.id), disabled: a.acknowledged,
        text: a.acknowledged ? 'acknowledged' : 'Acknowledge',
        'aria-label': a.acknowledged ? `${a.rule} acknowledged` : `Acknowledge ${a.rule}`,
      });
      ack.addEventListener('click', () => this.onAcknowledge?.(a));
      // A quiet rule has nothing to acknowledge.
      ack.hidden = a.state === 'quiet';
      const history = el('details', {}, el('summary', { text: `history (${a.history?.length ?? 0})` }),
        el('ol', {}, ...(a.history ?? []).map((h) => el('li', { text: `${formatUtc(isoToMs(h.time))}: ${h.from} → ${h.to}` }))));
      const li = el(
        'li',
        { class: `alert state-${a.state}`, 'data-alert': String(a.id), 'data-state': a.state },
        el('div', { class: 'alert-head' },
          el('span', { class: 'state', text: `${STATE_MARK[a.state] ?? ''} ${a.state}` }),
          el('strong', { class: 'rule', text: a.rule }),
          el('span', { class: 'since', text: `since ${formatUtc(isoToMs(a.since))}` }),
          ack),
        el('div', { class: 'evidence', text: evidence.join(' · ') || 'no evidence sent' }),
        el('div', { class: 'source', text: `source: ${a.source || 'not given'}` }),
        message && String(message.id) === String(a.id) ? el('div', { class: 'note', role: 'status', text: message.text }) : null,
        history,
      );
      this.list.append(li);
    }
  }
}
