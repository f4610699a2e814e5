// Every message the monitor sends to a region's viewers (docs/api.md "WebSocket"), typed once
// here and built by these functions: the server sends what they return, the page reads the same
// types. A sample is a series row (core/seriesColumns.ts), an alert an alert record
// (core/alerts/alertState.ts), a gap a WireGap, a footpoint a WireFootpoint: one spelling of each
// field in the CSV, the JSON exports, the API, the page and `helicord rate`.
//
//   hub.send(region, sampleMessage(row));   // { type: 'sample', sample: row }

import type { AlertRecord } from '../alerts/alertState.js';
import type { SeriesRow } from '../seriesColumns.js';
import type { WireGap } from './gapWire.js';

/** A region's state as its viewers and the health route see it. */
export interface WireStatus {
  readonly last_frame_time: string | null;
  /** The series' cadence, s (core/accumulate.ts seriesCadenceS), null before there is one. */
  readonly cadence_s: number | null;
  readonly refusals: number;
  readonly gaps: number;
  readonly queue: number;
  readonly queue_limit: number;
  readonly disk_full: boolean;
  readonly replay: unknown;
}

export interface SnapshotMessage {
  readonly type: 'snapshot';
  readonly region: string;
  readonly samples: readonly SeriesRow[];
  readonly gaps: readonly WireGap[];
  readonly alerts: readonly AlertRecord[];
  readonly status: WireStatus;
  readonly latest_frame: { readonly frame_id: number; readonly time: string } | null;
  /**
   * The gap rule of the region's budget: an interval longer than gap_factor x status.cadence_s is
   * a gap (core/budget.ts); the page breaks its curves by the same rule.
   */
  readonly gap_factor: number;
}

export interface SampleMessage { readonly type: 'sample'; readonly sample: SeriesRow }
export interface AlertMessage { readonly type: 'alert'; readonly alert: AlertRecord }
export interface FrameMessage { readonly type: 'frame'; readonly frame_id: number; readonly time: string }
export interface StatusMessage { readonly type: 'status'; readonly status: WireStatus }
export interface BackfillMessage { readonly type: 'backfill'; readonly samples: readonly SeriesRow[]; readonly more: boolean }
export interface ErrorMessage { readonly type: 'error'; readonly error: string }

export type ViewerMessage = SnapshotMessage | SampleMessage | AlertMessage | FrameMessage | StatusMessage | BackfillMessage | ErrorMessage;

export function snapshotMessage(region: string, parts: Omit<SnapshotMessage, 'type' | 'region'>): SnapshotMessage {
  return { type: 'snapshot', region, ...parts };
}

export function sampleMessage(sample: SeriesRow): SampleMessage {
  return { type: 'sample', sample };
}

export function alertMessage(alert: AlertRecord): AlertMessage {
  return { type: 'alert', alert };
}

export function frameMessage(frameId: number, time: number): FrameMessage {
  return { type: 'frame', frame_id: frameId, time: new Date(time).toISOString() };
}

export function statusMessage(status: WireStatus): StatusMessage {
  return { type: 'status', status };
}
