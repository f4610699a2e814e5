// Frames from FITS images, by our own convention:
// - one file per time: image HDUs named by EXTNAME BN (required), BX, BY, VX, VY, VZ (optional);
// - or several files per time, each holding one component in its first image HDU, the component
//   told by a per-region rule (a file-name pattern or a header keyword value), grouped by time.
// Time from DATE-AVG/DATE-OBS with TIMESYS, pixel size from CDELT/CUNIT, fields from BUNIT (G or
// Mx/cm^2) and velocities (km/s or m/s) converted to core units, then an optional sign or mirror
// per component for archives whose axes differ from ours. Non-finite pixels become NaN.

import type { Frame, FrameMapName } from '../frame.js';
import { FRAME_MAPS, checkFrame, frameFromMaps } from '../frame.js';
import { InputError } from '../inputError.js';
import type { FitsHeader, FitsValue } from '../fits/header.js';
import { headerRecord, headerString } from '../fits/header.js';
import type { Hdu } from '../fits/hduList.js';
import { hduLabel, listHdus } from '../fits/hduList.js';
import type { ReadOptions } from '../fits/readImage.js';
import { decodeImageHdu, isImageHdu } from '../fits/readImage.js';
import { fieldToGauss, velocityToKmPerS } from '../units.js';
import { resolveLayout } from './componentLayouts.js';
import { frameTimeFromHeaders } from './frameTime.js';
import { pixelSizeMm } from './pixelScale.js';
import { WCS_KEYWORD, frameWcs, wcsRecord } from './wcs.js';

/** Per-component correction for archives whose conventions differ from ours. */
export interface ComponentTransform {
  /** Multiply by -1 (e.g. a By that points south). */
  readonly negate?: boolean;
  /** Reverse the order of columns (x) or rows (y). */
  readonly mirrorX?: boolean;
  readonly mirrorY?: boolean;
  /** Unit assumed when the HDU has no BUNIT (otherwise a missing BUNIT is an error). */
  readonly unit?: string;
}

/** How a file of a multi-file time is recognised as a component. */
export type ComponentRule =
  | { readonly pattern: string; readonly flags?: string }
  | { readonly keyword: string; readonly value: string };

export interface FrameAssemblySettings {
  /**
   * A named layout (core/frameAssembly/componentLayouts.ts: 'frame', 'cea-components') whose file
   * rules and corrections apply where `files` and `transforms` do not say otherwise.
   */
  readonly layout?: string;
  readonly transforms?: Partial<Record<FrameMapName, ComponentTransform>>;
  /** Which time keyword wins when both exist (default DATE-AVG). */
  readonly timeKeyword?: 'DATE-AVG' | 'DATE-OBS';
  /** Several files per time: the rule that recognises each component's files. */
  readonly files?: Partial<Record<FrameMapName, ComponentRule>>;
  /** Files whose times differ by at most this many seconds make one frame (default 1 s). */
  readonly groupToleranceS?: number;
  readonly read?: ReadOptions;
}

/** One component's image: where it is and the headers to search (its own, then the primary). */
export interface ComponentSource {
  readonly source: string;
  readonly bytes: Uint8Array;
  readonly hdu: Hdu;
  readonly headers: readonly FitsHeader[];
}

const FIELD_MAPS = new Set<FrameMapName>(['bn', 'bx', 'by']);
const STRUCTURAL = /^(SIMPLE|BITPIX|NAXIS\d*|EXTEND|XTENSION|PCOUNT|GCOUNT|TFIELDS|T(TYPE|FORM|UNIT|DIM|NULL|SCAL|ZERO)\d+|THEAP|Z[A-Z0-9_]*|CHECKSUM|DATASUM|BSCALE|BZERO|BLANK)$/;

function convert(values: Float64Array, name: FrameMapName, c: ComponentSource, t: ComponentTransform | undefined): void {
  const where = hduLabel(c.hdu.index, c.hdu.name);
  const bunit = headerString(c.hdu.header, 'BUNIT', c.source, where)?.trim() || t?.unit;
  if (bunit === undefined) {
    throw new InputError(c.source, `${where} BUNIT`, `is missing: cannot tell the unit of ${name} (set a unit for ${name} in the region's settings)`);
  }
  const isField = FIELD_MAPS.has(name);
  const factor = isField ? fieldToGauss(1, bunit) : velocityToKmPerS(1, bunit);
  if (factor === undefined) {
    throw new InputError(c.source, `${where} BUNIT`, `'${bunit}' is not a ${isField ? 'field unit (G, Mx/cm^2, T)' : 'velocity unit (km/s, m/s)'}`);
  }
  // Divide when the unit is a whole fraction of ours (m/s = km/s / 1000), so values are exact.
  const inverse = 1 / factor;
  const divide = factor < 1 && Number.isInteger(inverse);
  const sign = t?.negate ? -1 : 1;
  if (factor === 1 && sign === 1) {
    // Already in our unit: only infinities need replacing by NaN.
    for (let i = 0; i < values.length; i++) if (values[i] - values[i] !== 0) values[i] = NaN;
    return;
  }
  for (let i = 0; i < values.length; i++) {
    const v = sign * (divide ? values[i] / inverse : values[i] * factor);
    values[i] = Number.isFinite(v) ? v : NaN;
  }
}

function mirror(values: Float64Array, nx: number, ny: number, t: ComponentTransform | undefined): Float64Array {
  if (!t?.mirrorX && !t?.mirrorY) return values;
  const out = new Float64Array(values.length);
  for (let y = 0; y < ny; y++) {
    const sy = t.mirrorY ? ny - 1 - y : y;
    for (let x = 0; x < nx; x++) out[y * nx + x] = values[sy * nx + (t.mirrorX ? nx - 1 - x : x)];
  }
  return out;
}

function imageAxes(c: ComponentSource, axes: readonly number[]): [number, number] {
  const where = hduLabel(c.hdu.index, c.hdu.name);
  const extra = axes.slice(2);
  if (axes.length < 2 || extra.some((n) => n !== 1)) {
    throw new InputError(c.source, `${where} NAXIS`, `a frame map must be a 2-D image, got ${axes.join(' x ')}`);
  }
  return [axes[0], axes[1]];
}

/**
 * Builds a checked Frame from component images (bn required). Time and pixel size come from bn's
 * headers; every other component must have bn's shape. Throws InputError naming file, HDU and problem.
 */
export function assembleFrame(components: Partial<Record<FrameMapName, ComponentSource>>, given: FrameAssemblySettings = {}): Frame {
  const settings = resolveLayout(given);
  const bnSrc = components.bn;
  if (!bnSrc) {
    const any = Object.values(components)[0];
    throw new InputError(any?.source ?? 'frame', 'BN', 'is missing: a frame needs the normal field (EXTNAME BN or the region\'s bn file rule)');
  }
  const where = hduLabel(bnSrc.hdu.index, bnSrc.hdu.name);
  const time = frameTimeFromHeaders(bnSrc.headers, bnSrc.source, where, settings.timeKeyword);
  const dx = pixelSizeMm(bnSrc.headers, 1, bnSrc.source, where);
  const dy = pixelSizeMm(bnSrc.headers, 2, bnSrc.source, where);
  const maps: Partial<Record<FrameMapName, Float64Array>> = {};
  let nx = 0, ny = 0;
  const keywords: Record<string, FitsValue> = {};
  for (const name of FRAME_MAPS) {
    const c = components[name];
    if (!c) continue;
    const img = decodeImageHdu(c.bytes, c.hdu, c.source, settings.read);
    const [cx, cy] = imageAxes(c, img.axes);
    if (name === 'bn') { nx = cx; ny = cy; }
    else if (cx !== nx || cy !== ny) {
      throw new InputError(c.source, `${hduLabel(c.hdu.index, c.hdu.name)} NAXIS`, `${name} is ${cx} x ${cy} but bn is ${nx} x ${ny}`);
    }
    const t = settings.transforms?.[name];
    convert(img.values, name, c, t);
    maps[name] = mirror(img.values, cx, cy, t);
    if (c.source !== bnSrc.source) keywords[`FILE_${name.toUpperCase()}`] = c.source;
  }
  for (const h of [...bnSrc.headers].reverse()) {
    for (const [k, v] of Object.entries(headerRecord(h))) if (!STRUCTURAL.test(k)) keywords[k] = v;
  }
  // The kept WCS describes the frame's own pixels: turned round with bn when bn was mirrored.
  const bnT = settings.transforms?.bn;
  if (bnT?.mirrorX || bnT?.mirrorY) {
    const wcs = frameWcs(keywords, nx, ny, { x: bnT.mirrorX, y: bnT.mirrorY });
    for (const k of Object.keys(keywords)) if (WCS_KEYWORD.test(k)) delete keywords[k];
    if (wcs) Object.assign(keywords, wcsRecord(wcs));
  }
  return frameFromMaps({ time: time.utcMs, nx, ny, dx, dy }, maps, bnSrc.source, { provenance: { source: bnSrc.source, keywords } });
}

/** One FITS file per time, components named by EXTNAME (BN required). */
export function frameFromFits(bytes: Uint8Array, source: string, given: FrameAssemblySettings = {}): Frame {
  const settings = resolveLayout(given);
  const hdus = listHdus(bytes, source, settings.read);
  const primary = hdus[0].header;
  const components: Partial<Record<FrameMapName, ComponentSource>> = {};
  for (const hdu of hdus) {
    const name = (hdu.name ?? '').toLowerCase() as FrameMapName;
    if (!FRAME_MAPS.includes(name)) continue;
    if (components[name]) throw new InputError(source, hduLabel(hdu.index, hdu.name), `a second HDU named ${hdu.name}`);
    if (!isImageHdu(hdu)) throw new InputError(source, hduLabel(hdu.index, hdu.name), 'is named as a frame map but holds no image');
    components[name] = { source, bytes, hdu, headers: hdu.index === 0 ? [hdu.header] : [hdu.header, primary] };
  }
  if (!components.bn) {
    const names = hdus.map((h) => hduLabel(h.index, h.name)).join(', ');
    if (settings.files && Object.keys(settings.files).length > 0) {
      throw new InputError(source, '(file)', `is one file of a layout with one file per component${settings.layout ? ` (${settings.layout})` : ''}: its frame is assembled from the files of all its components at one time, not from this file alone`);
    }
    throw new InputError(source, 'EXTNAME BN', `not found (the file has ${names}); a frame file names its maps BN, BX, BY, VX, VY, VZ; for archives with one file per component give a layout (--layout cea-components) or file rules (--component bn=pattern:REGEX; docs/fits.md)`);
  }
  return assembleFrame(components, settings);
}

