// Pixel size in Mm from the WCS keywords CDELTi and CUNITi (FITS WCS papers I-II; solar axes as
// in Thompson 2006, "Coordinate systems for solar image data"):
// - lengths Mm, km, m, cm convert directly;
// - deg on heliographic axes (HGLN/HGLT, CRLN/CRLT, or axes without CTYPE) are arcs on the solar
//   surface: 1 deg = MM_PER_HELIOGRAPHIC_DEG;
// - arcsec (arcmin, mas, rad, and deg on helioprojective HPLN/HPLT axes) are angles seen by the
//   observer: size = (DSUN_OBS - R_sun) * angle at disk centre, DSUN_OBS in m (default 1 au).

import { InputError } from '../inputError.js';
import type { FitsHeader } from '../fits/header.js';
import { headerNumber, headerString } from '../fits/header.js';
import { M_PER_AU, MM_PER_HELIOGRAPHIC_DEG, SOLAR_RADIUS_MM, angleToRadians, lengthToMm } from '../units.js';

function first<T>(headers: readonly FitsHeader[], get: (h: FitsHeader) => T | undefined): T | undefined {
  for (const h of headers) {
    const v = get(h);
    if (v !== undefined) return v;
  }
  return undefined;
}

const LENGTH_UNITS = new Set(['Mm', 'km', 'm', 'cm']);

/** Observer-to-Sun-centre distance in Mm from DSUN_OBS (m), 1 au when absent. */
export function observerDistanceMm(headers: readonly FitsHeader[], source: string, where: string): number {
  const d = first(headers, (h) => headerNumber(h, 'DSUN_OBS', source, where));
  if (d === undefined) return M_PER_AU / 1e6;
  if (!(d > SOLAR_RADIUS_MM * 1e6)) throw new InputError(source, `${where} DSUN_OBS`, `${d} m is not outside the Sun`);
  return d / 1e6;
}

/**
 * Pixel side along axis 1 (x) or 2 (y) in Mm. Looks in the headers in order (image, then
 * primary). Throws InputError naming CDELTi/CUNITi when absent, zero or in an unknown unit.
 */
export function pixelSizeMm(headers: readonly FitsHeader[], axis: 1 | 2, source: string, where: string): number {
  const key = `CDELT${axis}`;
  let cdelt = first(headers, (h) => headerNumber(h, key, source, where));
  if (cdelt === undefined) cdelt = first(headers, (h) => headerNumber(h, `CD${axis}_${axis}`, source, where));
  if (cdelt === undefined) throw new InputError(source, `${where} ${key}`, 'is missing: the pixel size comes from CDELT1/CDELT2 with CUNIT1/CUNIT2');
  if (cdelt === 0) throw new InputError(source, `${where} ${key}`, 'is 0: no pixel size');
  const size = Math.abs(cdelt);
  const ctype = (first(headers, (h) => headerString(h, `CTYPE${axis}`, source, where)) ?? '').trim().toUpperCase();
  const celestial = /^[A-Z]{2,4}-[A-Z0-9-]{3}$/.test(ctype) || /^(HG|CR|HP)L[NT]$/.test(ctype.slice(0, 4));
  let unit = first(headers, (h) => headerString(h, `CUNIT${axis}`, source, where))?.trim();
  // Celestial axes default to degrees (WCS paper II).
  if (unit === undefined || unit === '') {
    if (celestial) unit = 'deg';
    else throw new InputError(source, `${where} CUNIT${axis}`, `is missing: cannot tell the unit of ${key} = ${cdelt}`);
  }
  if (LENGTH_UNITS.has(unit)) return lengthToMm(size, unit)!;
  const lower = unit.toLowerCase();
  const helioprojective = ctype.startsWith('HPLN') || ctype.startsWith('HPLT');
  if ((lower === 'deg' || lower === 'degree' || lower === 'degrees') && !helioprojective) return size * MM_PER_HELIOGRAPHIC_DEG;
  const rad = angleToRadians(size, lower);
  if (rad === undefined) {
    throw new InputError(source, `${where} CUNIT${axis}`, `'${unit}' is not a pixel unit we know (Mm, km, m, cm, deg, arcsec, arcmin, mas, rad)`);
  }
  return (observerDistanceMm(headers, source, where) - SOLAR_RADIUS_MM) * rad;
}
