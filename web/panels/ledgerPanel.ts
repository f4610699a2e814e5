// The Footpoint ledger panel: the footpoints of the frame on the map; a row click selects one.

import { byId } from '../dom.js';
import { Ledger } from '../ledger.js';
import { touched, type PageStore } from '../pageStore.js';

export function mountLedgerPanel(store: PageStore): void {
  const ledger = new Ledger(byId<HTMLTableElement>('ledger'), byId('ledger-caption'));
  ledger.onSelect = (id) => store.set({ selectedFootpoint: id });
  ledger.setRows([], 'no frame yet');
  store.subscribe((s, changed) => {
    if (touched(changed, 'shownFrame')) {
      const f = s.shownFrame;
      ledger.setRows(f?.footpoints ?? [], f ? `${f.footpoints.length} footpoints · ${f.label}` : 'no frame yet');
      ledger.select(s.selectedFootpoint);
    } else if (touched(changed, 'selectedFootpoint')) ledger.select(s.selectedFootpoint);
  });
}
