// FITS frames posted over HTTP or WebSocket. The FITS reader in core/fits does not yet offer a
// function from file bytes to frames (grid from WCS, bn/bx/by/velocity maps by keyword), so FITS
// bytes are refused with 415 and a clear message until it does; JSON frames are accepted.
import type { Frame } from '../core/frame.js';
import { InputError } from '../core/inputError.js';

export class UnsupportedMediaError extends InputError {
  readonly status = 415;
}

export function framesFromFits(_bytes: Uint8Array, source: string): Frame[] {
  throw new UnsupportedMediaError(source, '(content-type)',
    'FITS frames are not accepted by this build yet (the FITS frame reader is not in core/fits); send the frame as application/json');
}
