// The region picker in the header: the monitor's regions (replays marked), the note beside it.

import { byId, el } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';

export function mountRegionPicker(store: PageStore, open: (name: string) => void): void {
  const select = byId<HTMLSelectElement>('region');
  const note = byId('region-note');
  select.addEventListener('change', () => {
    if (select.value) open(select.value);
  });
  store.subscribe((s, changed) => {
    if (touched(changed, 'regions', 'regionsLoaded')) {
      select.replaceChildren(
        ...(s.regions.length > 0
          ? s.regions.map((r) => el('option', { value: r.name, text: `${r.name}${r.replay ? ' (replay)' : ''}` }))
          : [el('option', { value: '', text: s.regionsLoaded ? 'no region yet' : 'loading…' })]),
      );
    }
    if (touched(changed, 'regions', 'regionsLoaded', 'region') && s.region) select.value = s.region;
    if (touched(changed, 'regionNote')) note.textContent = s.regionNote;
  });
}
