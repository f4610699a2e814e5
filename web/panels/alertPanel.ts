// The Alert log panel: the log rendered from the store (current values follow each new sample),
// acknowledging with the token.

import { postJson } from '../api.js';
import { mergeAlerts } from '../alertMarks.js';
import { AlertLog } from '../alertLog.js';
import { byId } from '../dom.js';
import { touched, type PageStore } from '../pageStore.js';
import { routes } from '../routes.js';
import type { WireAlert } from '../wire.js';
import type { TokenDialog } from './tokenDialog.js';

export function mountAlertPanel(store: PageStore, token: TokenDialog): void {
  const log = new AlertLog(byId('alerts'));
  let pending = false;
  const render = (): void => {
    const s = store.get();
    log.render(
      s.alerts,
      { series: s.series, gaps: s.gaps, refusals: s.status?.refusals, cadenceS: s.status?.cadence_s, gapFactor: s.gapFactor },
      s.alertArrivals as Map<string, number>,
      s.ackMessage,
    );
  };
  log.onAcknowledge = (alert) => {
    const region = store.get().region;
    if (!region) return;
    token.withToken(
      async () => {
        const answer = await postJson<WireAlert | { alert: WireAlert }>(routes.ack(region, alert.id), {});
        const updated = 'alert' in answer && typeof answer.alert === 'object' ? answer.alert : (answer as WireAlert);
        store.set({ alerts: mergeAlerts(store.get().alerts, [{ ...alert, ...updated, acknowledged: updated.acknowledged ?? true }]), ackMessage: undefined });
      },
      (text) => store.set({ ackMessage: { id: alert.id, text } }),
    );
  };
  store.subscribe((_s, changed) => {
    if (!touched(changed, 'alerts', 'ackMessage', 'series', 'gaps', 'status', 'gapFactor', 'region')) return;
    // A button the user is about to press must not be replaced under the pointer by every sample:
    // alert changes render at once, the current values with the next frame.
    if (touched(changed, 'alerts', 'ackMessage', 'region')) {
      render();
      return;
    }
    if (pending) return;
    pending = true;
    requestAnimationFrame(() => {
      pending = false;
      render();
    });
  });
  render();
}
