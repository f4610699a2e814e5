// The shapes on the wire between the monitor and the page (docs/api.md). Times stay ISO strings
// here; the page converts them to ms once, when a sample enters its own series (seriesMerge.ts).

// The shapes the monitor builds are typed once, in core/wire/ and core/seriesColumns.ts (one
// spelling everywhere: CSV, JSON exports, API, page, `helicord rate`); the page reads them as they
// are. What only the page asks for (maps, region lists, replay control) is typed here.
import type { AlertChange as CoreAlertChange, AlertRecord, AlertStateName, Evidence } from '../core/alerts/alertState.js';
import type { SeriesRow } from '../core/seriesColumns.js';
import type { OrbitPartner as CoreOrbitPartner, WireFootpoint as CoreFootpoint } from '../core/wire/footpointWire.js';
import type { WireGap as CoreGap } from '../core/wire/gapWire.js';
import type { WireStatus } from '../core/wire/viewerMessages.js';

export type WireSample = SeriesRow;
export type WireGap = CoreGap;
export type OrbitPartner = CoreOrbitPartner;

/**
 * A footpoint as the page holds it: the contract's fields it draws and lists (the page checks each
 * one on arrival, web/footpointShape.ts), the others when present; `outline` only from the test
 * double (the monitor sends none).
 */
export type WireFootpoint = Pick<CoreFootpoint, 'id' | 'polarity' | 'flux' | 'x' | 'y' | 'area' | 'omega' | 'omega_method' | 'spin' | 'spin_point' | 'partners'>
  & Partial<Pick<CoreFootpoint, 'omega_error' | 'omega_note' | 'status' | 'spin_budget'>>
  & { readonly outline?: readonly (readonly [number, number])[] };

export interface FootpointsAnswer {
  frame_id: string | number;
  time: string;
  footpoints: WireFootpoint[];
  tracks: Record<string, [number, number][]>;
}

/** The frame's world coordinates (FITS WCS as core/frameAssembly/wcs.ts reads them), when the
 *  answer carries them: the monitor does not send them on the map route yet (they are in maps.fits). */
export type MapWcs = import('../core/frameAssembly/wcs.js').FrameWcs;

export interface MapAnswer {
  frame_id: string | number;
  time: string;
  layer: 'bn' | 'gtheta' | 'labels';
  unit: string;
  nx: number;
  ny: number;
  dx: number;
  dy: number;
  encoding: 'float32-base64';
  data: string;
  wcs?: MapWcs | null;
}

export type AlertState = AlertStateName;
/** Evidence as the page reads it: every field may be missing (the words say what they can). */
export type WireEvidence = Readonly<Partial<Evidence>> & Readonly<Record<string, unknown>>;
export type AlertChange = Omit<CoreAlertChange, 'evidence'> & { readonly evidence?: WireEvidence };
/** An alert record (core/alerts/alertState.ts) as the page reads it: evidence and threshold may be missing. */
export type WireAlert = Omit<AlertRecord, 'evidence' | 'history' | 'threshold'> & {
  readonly threshold: number | null;
  readonly evidence: WireEvidence | null;
  readonly history: readonly AlertChange[];
};

export interface ReplayInfo {
  state: 'playing' | 'paused' | 'done';
  speed: number;
  position: number;
  total: number;
  /** `demo`, `folder <path>` or `region <name>` (docs/api.md "Replay"). */
  source?: string;
}

/** The region's status (core/wire/viewerMessages.ts), its replay state read as the page shows it. */
export type FeedStatus = Omit<WireStatus, 'replay'> & { readonly replay: ReplayInfo | null };

export interface RegionInfo {
  name: string;
  created: string;
  settings: Record<string, unknown>;
  frames: number;
  last_frame_time: string | null;
  last_sample_time: string | null;
  replay: ReplayInfo | null;
}

export interface LatestFrame {
  frame_id: string | number;
  time: string;
}

export type ViewerMessage =
  | {
      type: 'snapshot';
      region: string;
      samples: WireSample[];
      gaps: WireGap[];
      alerts: WireAlert[];
      status: FeedStatus;
      latest_frame: LatestFrame | null;
      /** The region's gap rule: an interval over gap_factor x the cadence is a gap (its budget
       *  setting `gapFactor`); absent from monitors older than this field. */
      gap_factor?: number;
    }
  | { type: 'sample'; sample: WireSample }
  | { type: 'alert'; alert: WireAlert }
  | { type: 'frame'; frame_id: string | number; time: string }
  | { type: 'status'; status: FeedStatus }
  /** `more`: the reply is one page; ask again from its last sample for the rest. */
  | { type: 'backfill'; samples: WireSample[]; more?: boolean };

/** Parses one viewer message; undefined for anything that is not a known message (ignored). */
export function parseViewerMessage(text: string): ViewerMessage | undefined {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    return undefined;
  }
  if (typeof value !== 'object' || value === null) return undefined;
  const type = (value as { type?: unknown }).type;
  switch (type) {
    case 'snapshot':
    case 'sample':
    case 'alert':
    case 'frame':
    case 'status':
    case 'backfill':
      return value as ViewerMessage;
    default:
      return undefined;
  }
}

// The braid route's shapes are typed in core (core/wire/braidWire.ts), where they are built.
export type BraidRow = import('../core/wire/braidWire.js').BraidRowWire;
export type BraidTriple = import('../core/wire/braidWire.js').BraidTripleWire;
export type BraidSpanAnswer = import('../core/wire/braidWire.js').BraidSpanWire;
export type BraidAnswer = import('../core/wire/braidWire.js').BraidRouteAnswer;
