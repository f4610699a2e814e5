// The Replay bar, shown while the region is replayed: play, pause, speed, seek; "frame N of T"
// counts the frames sent so far of the archive, the count the map caption uses.

import { postJson } from '../api.js';
import { byId } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';
import { routes } from '../routes.js';
import type { ReplayInfo } from '../wire.js';
import type { TokenDialog } from './tokenDialog.js';

export function mountReplayPanel(store: PageStore, token: TokenDialog): void {
  const box = byId('replay');
  const seek = byId<HTMLInputElement>('replay-seek');
  const speed = byId<HTMLSelectElement>('replay-speed');
  const text = byId('replay-text');
  const play = byId<HTMLButtonElement>('replay-play');
  const pause = byId<HTMLButtonElement>('replay-pause');
  let seeking = false;

  const render = (r: ReplayInfo | null): void => {
    box.hidden = r === null;
    if (!r) return;
    if (!seeking) {
      seek.max = String(Math.max(0, r.total - 1));
      seek.value = String(r.position);
    }
    if (document.activeElement !== speed) {
      // A speed set elsewhere (the command line, the API) that the menu does not list joins it.
      const value = String(r.speed);
      if (![...speed.options].some((o) => o.value === value)) {
        const option = document.createElement('option');
        option.value = value;
        option.textContent = `×${r.speed}`;
        speed.insertBefore(option, [...speed.options].find((o) => Number(o.value) > r.speed || o.value === '0') ?? null);
      }
      speed.value = value;
    }
    text.textContent = `${r.state} · frame ${Math.min(r.position, r.total)} of ${r.total} · ${r.speed === 0 ? 'as fast as possible' : `×${r.speed}`}`;
    play.disabled = r.state === 'playing';
    pause.disabled = r.state !== 'playing';
  };

  const act = (action: 'pause' | 'resume' | 'seek' | 'speed', value?: number): void => {
    const region = store.get().region;
    if (!region) return;
    token.withToken(
      async () => {
        await postJson(routes.replay(region), value === undefined ? { action } : { action, value });
      },
      (message) => {
        text.textContent = message;
      },
    );
  };
  play.addEventListener('click', () => act('resume'));
  pause.addEventListener('click', () => act('pause'));
  speed.addEventListener('change', () => act('speed', Number(speed.value)));
  seek.addEventListener('input', () => {
    seeking = true;
  });
  seek.addEventListener('change', () => {
    seeking = false;
    act('seek', Number(seek.value));
  });
  store.subscribe((s, changed) => {
    if (touched(changed, 'status', 'regions', 'region')) render(s.status?.replay ?? s.regions.find((r) => r.name === s.region)?.replay ?? null);
  });
}
