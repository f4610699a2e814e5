// The Alert log: each rule with its state in words and a mark (never colour alone), when it
// changed and on which clock, where the region stands against it now, the evidence of its last
// change in words and units, the published source, the history and an acknowledge button.

import { el } from './dom.js';
import { currentWords, evidenceWords, historyWords, ruleTitle, sinceWords, sourceWords, STATE_MARK, type AlertContext } from './alertWords.js';
import { isoToMs } from './seriesMerge.js';
import type { AlertState, WireAlert } from './wire.js';

export class AlertLog {
  onAcknowledge: ((alert: WireAlert) => void) | undefined;

  constructor(private readonly list: HTMLElement) {}

  render(alerts: readonly WireAlert[], ctx: AlertContext, arrivals: ReadonlyMap<string, number>, message?: { id: string | number; text: string }): void {
    this.list.replaceChildren();
    if (alerts.length === 0) {
      this.list.append(el('li', { class: 'empty', text: 'no alerts for this region yet' }));
      return;
    }
    // Raised first, then rising, settled, quiet; newest first inside each.
    const order: Record<AlertState, number> = { raised: 0, rising: 1, settled: 2, quiet: 3 };
    const sorted = alerts.slice().sort((a, b) => order[a.state] - order[b.state] || isoToMs(b.since) - isoToMs(a.since));
    for (const a of sorted) {
      const title = ruleTitle(a.rule);
      const ack = el('button', {
        type: 'button', class: 'ack', 'data-alert': String(a.id), disabled: a.acknowledged,
        text: a.acknowledged ? 'acknowledged' : 'Acknowledge',
        'aria-label': a.acknowledged ? `${title}: acknowledged` : `Acknowledge: ${title}`,
      });
      ack.addEventListener('click', () => this.onAcknowledge?.(a));
      // A quiet rule has nothing to acknowledge.
      ack.hidden = a.state === 'quiet';
      const now = currentWords(a, ctx);
      // A quiet rule's stored evidence is that of the moment it was made: only the current value counts.
      const evidence = a.state === 'quiet' ? '' : evidenceWords(a);
      const history = el('details', {}, el('summary', { text: `history (${a.history?.length ?? 0})` }),
        el('ol', {}, ...(a.history ?? []).map((h) => el('li', { text: historyWords(a, h) }))));
      const li = el(
        'li',
        { class: `alert state-${a.state}`, 'data-alert': String(a.id), 'data-state': a.state },
        el('div', { class: 'alert-head' },
          el('span', { class: 'state', text: `${STATE_MARK[a.state] ?? ''} ${a.state}` }),
          el('strong', { class: 'rule', text: title }),
          ack),
        el('div', { class: 'since', text: sinceWords(a, arrivals.get(String(a.id))) }),
        evidence ? el('div', { class: 'evidence', text: `${{ raised: 'when raised', rising: 'when it began rising', settled: 'when it settled', quiet: '' }[a.state]}: ${evidence}` }) : null,
        now ? el('div', { class: 'current', text: now }) : null,
        !evidence && !now ? el('div', { class: 'evidence', text: 'nothing measured yet' }) : null,
        el('div', { class: 'source', text: `source: ${sourceWords(a.source)}` }),
        message && String(message.id) === String(a.id) ? el('div', { class: 'note', role: 'status', text: message.text }) : null,
        history,
      );
      this.list.append(li);
    }
  }
}
