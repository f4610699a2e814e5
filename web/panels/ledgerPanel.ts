// The Footpoint ledger panel: the footpoints of the frame on the map; a row click selects one. Under
// it, the braid window's triples that are braided while no pair of them winds on balance.

import { flaggedTriples, TRIPLE_EXPLANATION } from '../braidWords.js';
import { byId, el } from '../dom.js';
import { Ledger } from '../ledger.js';
import { touched, type PageStore } from '../pageStore.js';
import { formatSci } from '../unitFormat.js';
import type { BraidAnswer } from '../wire.js';

function renderTriples(box: HTMLElement, answer: BraidAnswer | null | undefined): void {
  const window = answer?.last?.window;
  box.hidden = !window;
  if (!window) return;
  const flagged = flaggedTriples(answer ?? undefined);
  const body = byId<HTMLTableSectionElement>('triples-body');
  body.replaceChildren(
    ...flagged.map((t) => el('tr', { 'data-ids': t.ids.join('-') },
      el('td', { text: t.ids.join(', ') }),
      el('td', { class: 'num', text: t.entropy.toFixed(3) }),
      el('td', { class: 'num', text: t.milnor === null ? '—' : String(t.milnor), title: t.milnor === null ? 'defined only when every pair winds 0 on balance' : undefined }),
      el('td', { class: 'num', text: t.windingTurns.map((w) => formatSci(Math.abs(w) < 0.005 ? 0 : w, 2)).join(', ') }),
    )),
  );
  byId('triples-table').hidden = flagged.length === 0;
  byId('triples-explain').hidden = flagged.length === 0;
  byId('triples-caption').textContent = flagged.length === 0
    ? `no triple of the braid window (${formatSci(window.hours, 2)} h) is braided unseen by the pair budget`
    : `${flagged.length} of ${window.triples.length} triples of the braid window (${formatSci(window.hours, 2)} h)`;
}

export function mountLedgerPanel(store: PageStore): void {
  const ledger = new Ledger(byId<HTMLTableElement>('ledger'), byId('ledger-caption'));
  const triples = byId('braid-triples');
  byId('triples-explain').textContent = TRIPLE_EXPLANATION;
  ledger.onSelect = (id) => store.set({ selectedFootpoint: id });
  ledger.setRows([], 'no frame yet');
  renderTriples(triples, undefined);
  store.subscribe((s, changed) => {
    if (touched(changed, 'shownFrame')) {
      const f = s.shownFrame;
      ledger.setRows(f?.footpoints ?? [], f ? `${f.footpoints.length} footpoints · ${f.label}` : 'no frame yet');
      ledger.select(s.selectedFootpoint);
    } else if (touched(changed, 'selectedFootpoint')) ledger.select(s.selectedFootpoint);
    if (touched(changed, 'braid')) renderTriples(triples, s.braid);
  });
}
