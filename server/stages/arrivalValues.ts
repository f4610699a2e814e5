// The values that pass between the monitor's arrival stages (validate -> order and store), and
// what a sender hands in. Immutable: a stage makes a new value, it never changes the one it got.

import type { Frame } from '../../core/frame.js';
import type { InputError } from '../../core/inputError.js';
import type { Intake } from '../frameIntake.js';

export type Payload =
  | { readonly kind: 'json'; readonly bytes: Uint8Array }
  | { readonly kind: 'fits'; readonly bytes: Uint8Array }
  | { readonly kind: 'frame'; readonly frame: Frame }
  /** A frame file in a watched folder (read by loadFrameFile in the intake worker). */
  | { readonly kind: 'file'; readonly path: string }
  | { readonly kind: 'error'; readonly error: InputError; readonly status: number };

export interface Arrival {
  readonly region: string;
  readonly payload: Payload;
  /** Where it came from, for the record: 'http', 'ws', a file name, 'demo'. */
  readonly source: string;
  /** The sender may create the region (holds the token). */
  readonly mayCreate: boolean;
  /** Already counted in the region's queue by `admit` (an HTTP request admitted before its body was read). */
  readonly admitted?: boolean;
}

export type IngestAnswer =
  | { readonly status: 201; readonly body: { status: 'stored'; frame_id: number; time: string } }
  | { readonly status: 200; readonly body: { status: 'duplicate'; frame_id: number; time: string } }
  | { readonly status: number; readonly body: { error: string; field: string; problem: string }; readonly retryAfterS?: number };

/** An arrival waiting for its region's turn, or an operation to run in that turn instead of a frame. */
export interface Queued {
  readonly arrival: Arrival;
  readonly resolve: (a: IngestAnswer) => void;
  /** Not a frame: an operation run in the region's arrival turn (Pipeline.arrivalTurn). */
  readonly turn?: () => Promise<void>;
}

/** A queued arrival after validation: its intake (parsed, hashed, encoded) or why it is refused. */
export interface Validated extends Queued {
  readonly intake?: Intake;
  readonly refusal?: { readonly status: number; readonly error: InputError; readonly frameTime?: number };
}
