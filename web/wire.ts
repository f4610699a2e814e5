// The shapes on the wire between the monitor and the page (docs/api.md). Times stay ISO strings
// here; the page converts them to ms once, when a sample enters its own series (seriesMerge.ts).

export interface WireSample {
  time: string;
  dt_s: number;
  rate_total: number | null;
  rate_spin: number | null;
  rate_orbit: number | null;
  rate_background: number | null;
  budget_total: number | null;
  budget_spin: number | null;
  budget_orbit: number | null;
  budget_background: number | null;
  rate_total_ga: number | null;
  rate_emergence: number | null;
  rate_shear: number | null;
  sigma_rate_total: number | null;
  sigma_budget_total: number | null;
  sigma_rate_spin?: number | null;
  sigma_rate_orbit?: number | null;
  velocity_method: string;
  split_method: string;
  noise_g: number | null;
  masked_fraction: number | null;
  flags: string[];
  frame_id: string | number;
  /** Unsigned flux, Mx, and the budget over its square (H / Phi^2); absent from older rows. */
  flux_unsigned?: number | null;
  budget_normalised?: number | null;
  /** Patch centre, Stonyhurst degrees, and its angle from disk centre, when the headers give them. */
  centre_lon_deg?: number | null;
  centre_lat_deg?: number | null;
  centre_disk_angle_deg?: number | null;
}

export interface WireGap {
  from: string;
  to: string;
  bridged: boolean;
}

export interface OrbitPartner {
  id: number | string;
  orbit: number;
}

export interface WireFootpoint {
  id: number | string;
  polarity: 1 | -1;
  flux: number;
  x: number;
  y: number;
  area: number;
  omega: number | null;
  omega_method: 'velocity' | 'pattern' | 'unobservable';
  spin: number | null;
  spin_point: number | null;
  /** 1-sigma of the pattern rotation, rad/s, and why there is no pattern rotation (analysis fields
   *  passed along with the row; absent from older answers). */
  omega_error?: number | null;
  omega_note?: string | null;
  partners: OrbitPartner[];
  outline?: [number, number][];
}

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

export type AlertState = 'quiet' | 'rising' | 'raised' | 'settled';

export interface AlertChange {
  time: string;
  from: AlertState;
  to: AlertState;
  evidence?: Record<string, unknown>;
}

export interface WireAlert {
  id: string | number;
  rule: string;
  state: AlertState;
  since: string;
  threshold: number | null;
  unit: string;
  source: string;
  evidence: { value?: number; window_from?: string; window_to?: string; [key: string]: unknown };
  acknowledged: boolean;
  history: AlertChange[];
}

export interface ReplayInfo {
  state: 'playing' | 'paused' | 'done';
  speed: number;
  position: number;
  total: number;
  /** `demo`, `folder <path>` or `region <name>` (docs/api.md "Replay"). */
  source?: string;
}

export interface FeedStatus {
  last_frame_time: string | null;
  cadence_s: number | null;
  refusals: number;
  gaps: number;
  /** Frames of the region waiting (arriving, or stored and not yet computed). */
  queue: number;
  /** The bound of that queue: past it senders are held back. */
  queue_limit?: number;
  /** The monitor's disk is full: frames wait for space. */
  disk_full?: boolean;
  replay: ReplayInfo | null;
}

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
