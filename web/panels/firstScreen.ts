// The first screen: on a monitor without regions, how to send a frame (the real address of this
// page, where the token is) instead of empty charts; on the demo, one line on what is watched.

import { byId } from '../dom.js';
import { DEMO_LINE, sendFrameCommands } from '../firstScreenText.js';
import { touched, type PageStore } from '../pageStore.js';

export function mountFirstScreen(store: PageStore): void {
  const help = byId('first-help');
  const commands = byId('first-help-commands');
  const address = byId('first-help-address');
  const panels = byId('panels');
  const demo = byId('demo-note');
  store.subscribe((s, changed) => {
    if (!touched(changed, 'regions', 'regionsLoaded', 'region', 'status')) return;
    const empty = s.regionsLoaded && s.regions.length === 0;
    help.hidden = !empty;
    panels.hidden = empty;
    if (empty) {
      const day = new Date().toISOString().slice(0, 10);
      address.textContent = location.origin;
      commands.textContent = sendFrameCommands(location.origin, `ar-test-${day}`);
    }
    const info = s.regions.find((r) => r.name === s.region);
    const source = s.status?.replay?.source ?? info?.replay?.source;
    demo.hidden = !(source === 'demo' || (source === undefined && s.region === 'demo' && info?.replay));
    demo.textContent = DEMO_LINE;
  });
}
