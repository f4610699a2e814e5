// Turning what a sender gave us into a storable frame: parse (JSON text, FITS bytes, or a frame
// file from a watched folder), check, hash the content and encode it for the store. Runs in the
// intake worker for anything large, so that parsing a big frame never blocks the event loop.
import type { Frame } from '../core/frame.js';
import { checkFrame } from '../core/frame.js';
import { parseFrameJson } from '../core/frameJson.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { frameFromFits } from '../core/frameAssembly/assembleFrame.js';
import { InputError } from '../core/inputError.js';
import { encodeFrame, frameHash } from './mapFile.js';

export interface IntakeMeta {
  readonly time: number;
  readonly nx: number;
  readonly ny: number;
  readonly dx: number;
  readonly dy: number;
}

export interface Intake {
  readonly meta: IntakeMeta;
  readonly hash: string;
  /** The frame in the store's map-file encoding. */
  readonly bytes: Uint8Array;
}

export type IntakeInput =
  | { readonly kind: 'json'; readonly text: string }
  | { readonly kind: 'fits'; readonly bytes: Uint8Array }
  | { readonly kind: 'frame'; readonly frame: Frame };

/** HTTP status of a refusal at intake: 400 for text that is not JSON, 422 for an invalid frame. */
export function intakeStatus(e: InputError): number {
  return e.field === '(json)' ? 400 : 422;
}

/**
 * A checked frame from what was sent. FITS follows our frame file convention (docs/fits.md:
 * image HDUs BN, BX, BY, VX, VY, VZ), read by core/frameAssembly with the region's component
 * settings (unit defaults, sign and mirror corrections, time keyword).
 */
export function frameFromInput(input: IntakeInput, source: string, settings: FrameAssemblySettings = {}): Frame {
  if (input.kind === 'frame') {
    checkFrame(input.frame, source);
    return input.frame;
  }
  if (input.kind === 'json') return parseFrameJson(input.text, source);
  return frameFromFits(input.bytes, source, settings);
}

export function intakeFrame(frame: Frame, source: string): Intake {
  const withSource: Frame = { ...frame, provenance: { ...frame.provenance, source } };
  return {
    meta: { time: frame.time, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy },
    hash: frameHash(frame),
    bytes: encodeFrame(withSource),
  };
}
