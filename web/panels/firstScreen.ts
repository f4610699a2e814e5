// The first screen: on a monitor without regions, how to send a frame (the real address of this
// page, where the token is) instead of empty charts; on the demo, one line on what is watched.

import { byId } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';

/** The commands that send a frame to this monitor, for a region name chosen for the day. */
export function sendFrameCommands(origin: string, region: string): string {
  return [
    '# the token: the file "token" in the monitor\'s data folder (--data, ./data by default),',
    '# printed at its first start; or the HELICORD_TOKEN the monitor was started with',
    'TOKEN=$(cat ./data/token)',
    '# a FITS frame, or a JSON frame',
    `curl -H "Authorization: Bearer $TOKEN" -H 'Content-Type: application/fits' \\`,
    `     --data-binary @frame.fits ${origin}/api/regions/${region}/frames`,
    `curl -H "Authorization: Bearer $TOKEN" -H 'Content-Type: application/json' \\`,
    `     --data-binary @frame.json ${origin}/api/regions/${region}/frames`,
    "# or drop files into the region's watched folder (a folder made there makes the region)",
    `mkdir -p ./data/inbox/${region} && cp frame.fits ./data/inbox/${region}/`,
  ].join('\n');
}

/** One line on the demo region: what the user is watching. */
export const DEMO_LINE =
  'Demo: an invented active region over 72 hours of 12-minute frames, played faster than real time. A bipole emerges, its leading ' +
  'spot turns and the polarities shear, so helicity builds up to about −3e42 Mx² and crosses the published thresholds; every number is invented.';

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
