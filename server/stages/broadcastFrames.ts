// Stage "broadcast": a committed frame is announced to the region's viewers: the frame, its
// series row, the alert changes it made (each also to the log and the webhook), the region's
// status; then whoever listens for processed frames (tests, the benchmark) hears of it.
//
//   committed$.pipe(broadcastFrames({ region: 'ar1', send, announce, status, processed }))

import type { MonoTypeOperatorFunction } from 'rxjs';
import { tap } from 'rxjs';
import type { AlertChange, AlertRecord } from '../../core/alerts/alertState.js';
import type { ViewerMessage, WireStatus } from '../../core/wire/viewerMessages.js';
import { frameMessage, sampleMessage, statusMessage } from '../../core/wire/viewerMessages.js';
import type { AccumulatedFrame } from './frameWork.js';

export interface BroadcastDeps {
  readonly region: string;
  readonly send: (message: ViewerMessage) => void;
  readonly announce: (alert: AlertRecord, change: AlertChange) => void;
  readonly status: () => WireStatus;
  readonly processed?: (frameId: number) => void;
}

export function broadcastFrames(deps: BroadcastDeps): MonoTypeOperatorFunction<AccumulatedFrame> {
  return tap((a) => {
    deps.send(frameMessage(a.frame.id, a.frame.time));
    if (a.row) deps.send(sampleMessage(a.row));
    for (const ch of a.changes) deps.announce(ch.alert, ch.change);
    deps.send(statusMessage(deps.status()));
    deps.processed?.(a.frame.id);
  });
}
