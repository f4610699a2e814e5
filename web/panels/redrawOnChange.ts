// A panel's redraw: once per animation frame after the store changed any of the keys it shows, and
// after the window was resized. Called when the panel is made (no side effect on import).
//
//   redrawOnChange(store, ['series', 'view'], draw);

import type { PageStore, StateKey } from '../pageStore.js';
import { touched } from '../pageStore.js';

export function redrawOnChange(store: PageStore, keys: readonly StateKey[], draw: () => void): void {
  let pending = false;
  store.subscribe((_s, changed) => {
    if (pending || !touched(changed, ...keys)) return;
    pending = true;
    requestAnimationFrame(() => {
      pending = false;
      draw();
    });
  });
  window.addEventListener('resize', () => requestAnimationFrame(draw));
}
