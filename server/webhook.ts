// Notifies a region's webhook URL of an alert change by POST (JSON), with a timeout; a failing
// webhook is logged and never holds up the pipeline.
import type { AlertChange, AlertRecord } from '../core/alerts/alertState.js';

export function postWebhook(url: string, region: string, alert: AlertRecord, change: AlertChange, log: (line: string) => void, timeoutMs = 5000): Promise<void> {
  const body = JSON.stringify({ type: 'alert', region, rule: alert.rule, from: change.from, to: change.to, time: change.time, evidence: change.evidence, threshold: alert.threshold, unit: alert.unit, source: alert.source });
  return fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body, signal: AbortSignal.timeout(timeoutMs) })
    .then((r) => { if (!r.ok) log(`webhook ${url} answered ${r.status}`); })
    .catch((e: unknown) => log(`webhook ${url} failed: ${(e as Error).message ?? e}`));
}
