// Turning what a sender gave us into a storable frame: parse (JSON text, FITS bytes, or a frame
// file from a watched folder), check, hash the content and encode it for the store. Runs in the
// intake worker for anything large, so that parsing a big frame never blocks the event loop.
import type { Frame } from '../core/frame.js';
import { checkFrame } from '../core/frame.js';
import { parseFrameJson } from '../core/frameJson.js';
import type { FrameAssemblySettings } from '../core/frameAssembly/assembleFrame.js';
import { frameFromFits } from '../core/frameAssembly/assembleFrame.js';
import { InputError } from '../core/inputError.js';
import { checkPhysicalLimits } from '../core/physicalLimits.js';
import { encodeFrame, frameHash } from './frameBlob.js';

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

/**
 * HTTP status of a refusal at intake: 400 for text that is not JSON, 413 for a frame over the
 * pixel budget, 422 for an invalid frame.
 */
export function intakeStatus(e: InputError): number {
  if (e.field === '(json)') return 400;
  if (/pixels exceeds the limit of \d+ pixels|bytes exceeds the limit of \d+ bytes/.test(e.problem)) return 413;
  return 422;
}

/**
 * A checked frame from what was sent. FITS follows our frame file convention (docs/fits.md:
 * image HDUs BN, BX, BY, VX, VY, VZ), read by core/frameAssembly with the region's component
 * settings (unit defaults, sign and mirror corrections, time keyword).
 */
export function frameFromInput(input: IntakeInput, source: string, settings: FrameAssemblySettings = {}, maxPixels?: number): Frame {
  if (input.kind === 'frame') {
    checkFrame(input.frame, source);
    return input.frame;
  }
  if (input.kind === 'json') return parseFrameJson(input.text, source, maxPixels !== undefined ? { maxPixels } : {});
  return frameFromFits(input.bytes, source, withPixelBudget(settings, maxPixels));
}

/** The region's FITS settings with the monitor's pixel budget (the smaller one wins). */
export function withPixelBudget(settings: FrameAssemblySettings, maxPixels: number | undefined): FrameAssemblySettings {
  if (maxPixels === undefined) return settings;
  const own = settings.read?.maxPixels;
  return { ...settings, read: { ...settings.read, maxPixels: own !== undefined ? Math.min(own, maxPixels) : maxPixels } };
}

/** Refuses values no photosphere has (core/physicalLimits.ts). */
export function checkIntake(frame: Frame, source: string): void {
  checkPhysicalLimits(frame, source);
}

export function intakeFrame(frame: Frame, source: string): Intake {
  checkIntake(frame, source);
  const withSource: Frame = { ...frame, provenance: { ...frame.provenance, source } };
  return {
    meta: { time: frame.time, nx: frame.nx, ny: frame.ny, dx: frame.dx, dy: frame.dy },
    hash: frameHash(frame),
    bytes: encodeFrame(withSource),
  };
}
