// The world coordinates of a frame's pixels, kept from the input's headers (FITS WCS papers I and
// II: Greisen & Calabretta 2002, Calabretta & Greisen 2002; solar axes as in Thompson 2006,
// "Coordinate systems for solar image data", A&A 449, 791):
// - frameWcs reads the celestial/heliographic WCS of an image (CTYPE, CUNIT, CRPIX, CRVAL, CDELT,
//   PCi_j, CDi_j or CROTA2, LONPOLE, LATPOLE, PVi_m), turned with the frame when a component
//   correction mirrors it, so that it describes the frame's own pixels; wcsRecord writes it back
//   as keywords with the observer's keywords;
// - pixelToWorld gives the world coordinates of a pixel for the projections CAR, CEA, TAN and SIN;
// - patchCentre gives the Stonyhurst heliographic longitude and latitude of the frame's centre
//   pixel and its angle from disk centre seen from the Sun's centre (mu = cos of it).
// Checked against astropy's WCS (test/fits/wcs.test.ts, fixtures by test/fixtures/fits/make_archive.py).

import type { FitsValue } from '../fits/header.js';
import { M_PER_AU, SOLAR_RADIUS_MM } from '../units.js';

export type KeywordRecord = Readonly<Record<string, FitsValue>>;

export interface FrameWcs {
  readonly ctype: readonly [string, string];
  readonly cunit: readonly [string, string];
  /** Reference pixel, 1-based (FITS). */
  readonly crpix: readonly [number, number];
  readonly crval: readonly [number, number];
  readonly cdelt: readonly [number, number];
  /** PC matrix, row-major [PC1_1, PC1_2, PC2_1, PC2_2]. */
  readonly pc: readonly [number, number, number, number];
  readonly lonpole?: number;
  readonly latpole?: number;
  /** Projection parameters by keyword (PV2_1 ...). */
  readonly pv: Readonly<Record<string, number>>;
}

/** Observer keywords carried with the WCS (Thompson 2006; DSUN_OBS and RSUN_REF in m). */
export const OBSERVER_KEYWORDS = [
  'DSUN_OBS', 'HGLN_OBS', 'HGLT_OBS', 'CRLN_OBS', 'CRLT_OBS', 'RSUN_REF', 'RSUN_OBS', 'CAR_ROT',
  'HEEX_OBS', 'HEEY_OBS', 'HEEZ_OBS', 'HCIX_OBS', 'HCIY_OBS', 'HCIZ_OBS', 'OBS_VR', 'OBS_VW', 'OBS_VN',
  'MJD-OBS', 'DATE-OBS', 'TIMESYS', 'TELESCOP', 'INSTRUME', 'WCSNAME', 'RADESYS', 'DATEREF',
] as const;

const num = (k: KeywordRecord, key: string): number | undefined => {
  const v = k[key];
  return typeof v === 'number' && Number.isFinite(v) ? v : undefined;
};
const str = (k: KeywordRecord, key: string): string | undefined => {
  const v = k[key];
  return typeof v === 'string' ? v.trim() : undefined;
};

/** Longitude-like and latitude-like axis types we give coordinates for (4 letters before the projection). */
const LON = /^(HGLN|CRLN|HPLN|RA--|GLON|ELON)$/;
const LAT = /^(HGLT|CRLT|HPLT|DEC-|GLAT|ELAT)$/;

/** True when CTYPE names a celestial or solar spherical axis ("HGLN-CEA", "HPLT-TAN" ...). */
function isSpherical(ctype: string): boolean {
  const head = ctype.slice(0, 4);
  return LON.test(head) || LAT.test(head);
}

const D2R = Math.PI / 180;

/**
 * The image's spherical WCS, or undefined when its first two axes are not celestial/heliographic
 * (then the frame's maps keep a linear WCS in Mm). `mirror` turns an axis round as the component
 * corrections did to the pixels (pixel p becomes n + 1 - p).
 */
export function frameWcs(k: KeywordRecord, nx: number, ny: number, mirror: { x?: boolean; y?: boolean } = {}): FrameWcs | undefined {
  const c1 = str(k, 'CTYPE1'), c2 = str(k, 'CTYPE2');
  if (!c1 || !c2 || !isSpherical(c1.toUpperCase()) || !isSpherical(c2.toUpperCase())) return undefined;
  const cunit: [string, string] = [str(k, 'CUNIT1') || 'deg', str(k, 'CUNIT2') || 'deg'];
  const crpix: [number, number] = [num(k, 'CRPIX1') ?? 0, num(k, 'CRPIX2') ?? 0];
  const crval: [number, number] = [num(k, 'CRVAL1') ?? 0, num(k, 'CRVAL2') ?? 0];
  let cdelt: [number, number] = [num(k, 'CDELT1') ?? 1, num(k, 'CDELT2') ?? 1];
  let pc: [number, number, number, number] = [1, 0, 0, 1];
  const pcGiven = ['PC1_1', 'PC1_2', 'PC2_1', 'PC2_2'].some((key) => num(k, key) !== undefined);
  const cdGiven = ['CD1_1', 'CD1_2', 'CD2_1', 'CD2_2'].some((key) => num(k, key) !== undefined);
  if (pcGiven) {
    pc = [num(k, 'PC1_1') ?? 1, num(k, 'PC1_2') ?? 0, num(k, 'PC2_1') ?? 0, num(k, 'PC2_2') ?? 1];
  } else if (cdGiven) {
    // CDi_j = CDELTi PCi_j with CDELT taken as 1 (WCS paper I, section 2.1.2).
    cdelt = [1, 1];
    pc = [num(k, 'CD1_1') ?? 0, num(k, 'CD1_2') ?? 0, num(k, 'CD2_1') ?? 0, num(k, 'CD2_2') ?? 0];
  } else {
    const rho = (num(k, 'CROTA2') ?? 0) * D2R;
    if (rho !== 0) {
      // The legacy rotation as a PC matrix (WCS paper II, section 6.1).
      const [d1, d2] = cdelt;
      pc = [Math.cos(rho), -Math.sin(rho) * (d2 / d1), Math.sin(rho) * (d1 / d2), Math.cos(rho)];
    }
  }
  const n = [nx, ny];
  const flip = [mirror.x === true, mirror.y === true];
  for (const j of [0, 1]) {
    if (!flip[j]) continue;
    crpix[j] = n[j] + 1 - crpix[j];
    pc[j] = -pc[j];       // column j of the matrix: PC1_j ...
    pc[2 + j] = -pc[2 + j]; // ... and PC2_j
  }
  // A diagonal matrix with a negative entry is written as a negative CDELT instead.
  if (pc[1] === 0 && pc[2] === 0) {
    for (const i of [0, 1]) {
      const d = i === 0 ? pc[0] : pc[3];
      if (d !== 1 && d !== 0) {
        cdelt = i === 0 ? [cdelt[0] * d, cdelt[1]] : [cdelt[0], cdelt[1] * d];
        if (i === 0) pc[0] = 1; else pc[3] = 1;
      }
    }
  }
  const pv: Record<string, number> = {};
  for (const [key, v] of Object.entries(k)) if (/^PV[12]_\d+$/.test(key) && typeof v === 'number') pv[key] = v;
  const lonpole = num(k, 'LONPOLE'), latpole = num(k, 'LATPOLE');
  return {
    ctype: [c1, c2], cunit, crpix, crval, cdelt, pc, pv,
    ...(lonpole !== undefined && { lonpole }), ...(latpole !== undefined && { latpole }),
  };
}

/** The WCS as keywords, for a map on the frame's grid (FITS WCS paper I). */
export function wcsRecord(w: FrameWcs): Record<string, FitsValue> {
  const out: Record<string, FitsValue> = {};
  for (const i of [0, 1]) {
    const a = i + 1;
    out[`CTYPE${a}`] = w.ctype[i];
    out[`CUNIT${a}`] = w.cunit[i];
    out[`CRPIX${a}`] = w.crpix[i];
    out[`CRVAL${a}`] = w.crval[i];
    out[`CDELT${a}`] = w.cdelt[i];
  }
  if (!(w.pc[0] === 1 && w.pc[1] === 0 && w.pc[2] === 0 && w.pc[3] === 1)) {
    [out.PC1_1, out.PC1_2, out.PC2_1, out.PC2_2] = w.pc;
  }
  if (w.lonpole !== undefined) out.LONPOLE = w.lonpole;
  if (w.latpole !== undefined) out.LATPOLE = w.latpole;
  for (const [k, v] of Object.entries(w.pv)) out[k] = v;
  return out;
}

/** Keywords that describe the WCS of an image (replaced as a whole when a frame is mirrored). */
export const WCS_KEYWORD = /^(WCSAXES|CTYPE\d|CUNIT\d|CRPIX\d|CRVAL\d|CDELT\d|CROTA\d|PC\d_\d|CD\d_\d|PV\d_\d+|PS\d_\d+|LONPOLE|LATPOLE)$/;

/** The observer keywords of a record (the ones it has). */
export function observerRecord(k: KeywordRecord): Record<string, FitsValue> {
  const out: Record<string, FitsValue> = {};
  for (const key of OBSERVER_KEYWORDS) if (k[key] !== undefined) out[key] = k[key];
  return out;
}

function angleToDeg(unit: string): number | undefined {
  switch (unit.toLowerCase()) {
    case 'deg': case 'degree': case 'degrees': return 1;
    case 'arcsec': return 1 / 3600;
    case 'arcmin': return 1 / 60;
    case 'mas': return 1 / 3.6e6;
    case 'rad': return 180 / Math.PI;
    default: return undefined;
  }
}

const sind = (x: number) => Math.sin(x * D2R);
const cosd = (x: number) => Math.cos(x * D2R);
const atan2d = (y: number, x: number) => Math.atan2(y, x) / D2R;
const asind = (x: number) => Math.asin(Math.max(-1, Math.min(1, x))) / D2R;
const acosd = (x: number) => Math.acos(Math.max(-1, Math.min(1, x))) / D2R;

/** Native spherical coordinates (phi, theta) of intermediate coordinates (x, y) in degrees, and the projection's reference point. */
function deproject(code: string, x: number, y: number, pv: Readonly<Record<string, number>>): { phi: number; theta: number; phi0: number; theta0: number } | undefined {
  switch (code) {
    case 'CAR':
      return { phi: x, theta: y, phi0: 0, theta0: 0 };
    case 'CEA': {
      // WCS paper II, section 5.2.2: theta = asin(lambda pi y / 180), lambda = PV2_1 (default 1).
      const lambda = pv.PV2_1 ?? 1;
      const s = (lambda * Math.PI * y) / 180;
      if (Math.abs(s) > 1) return undefined;
      return { phi: x, theta: Math.asin(s) / D2R, phi0: 0, theta0: 0 };
    }
    case 'TAN': {
      // Section 5.1.3: R = sqrt(x^2 + y^2), phi = arg(-y, x), theta = atan(180 / (pi R)).
      const r = Math.hypot(x, y);
      return { phi: r === 0 ? 0 : atan2d(x, -y), theta: atan2d(180 / Math.PI, r), phi0: 0, theta0: 90 };
    }
    case 'SIN': {
      // Section 5.1.5 without the oblique terms: theta = acos(pi R / 180).
      const r = Math.hypot(x, y);
      if ((Math.PI * r) / 180 > 1) return undefined;
      return { phi: r === 0 ? 0 : atan2d(x, -y), theta: acosd((Math.PI * r) / 180), phi0: 0, theta0: 90 };
    }
    default:
      return undefined;
  }
}

/** Native to celestial coordinates (WCS paper II, section 2.3, with the defaults of 2.4). */
function nativeToCelestial(phi: number, theta: number, w: FrameWcs, phi0: number, theta0: number, ref: [number, number]): [number, number] {
  const [alpha0, delta0] = ref;
  const phiP = w.lonpole ?? (delta0 >= theta0 ? 0 : 180);
  let alphaP: number, deltaP: number;
  if (theta0 === 90) {
    alphaP = alpha0;
    deltaP = delta0;
  } else {
    const a = atan2d(sind(theta0), cosd(theta0) * cosd(phiP - phi0));
    const b = acosd(sind(delta0) / Math.sqrt(1 - cosd(theta0) ** 2 * sind(phiP - phi0) ** 2));
    const latpole = w.latpole ?? 90;
    const wrap = (d: number) => (d > 180 ? d - 360 : d < -180 ? d + 360 : d);
    const candidates = [wrap(a + b), wrap(a - b)].filter((d) => d >= -90 - 1e-12 && d <= 90 + 1e-12);
    deltaP = candidates.length === 0 ? a + b : candidates.reduce((best, d) => (Math.abs(d - latpole) < Math.abs(best - latpole) ? d : best));
    if (Math.abs(deltaP - 90) < 1e-12) alphaP = alpha0 + phiP - phi0 - 180;
    else if (Math.abs(deltaP + 90) < 1e-12) alphaP = alpha0 - phiP + phi0;
    else {
      alphaP = alpha0 - atan2d(sind(phiP - phi0) * cosd(theta0) / cosd(delta0), (sind(theta0) - sind(deltaP) * sind(delta0)) / (cosd(deltaP) * cosd(delta0)));
    }
  }
  const dphi = phi - phiP;
  const alpha = alphaP + atan2d(-cosd(theta) * sind(dphi), sind(theta) * cosd(deltaP) - cosd(theta) * sind(deltaP) * cosd(dphi));
  const delta = asind(sind(theta) * sind(deltaP) + cosd(theta) * cosd(deltaP) * cosd(dphi));
  return [alpha, delta];
}

/**
 * World coordinates in degrees (longitude-like, latitude-like) of a pixel given in FITS 1-based
 * pixel coordinates; undefined for a projection we do not know or a point outside it.
 */
export function pixelToWorld(w: FrameWcs, px: number, py: number): [number, number] | undefined {
  const f1 = angleToDeg(w.cunit[0]), f2 = angleToDeg(w.cunit[1]);
  if (f1 === undefined || f2 === undefined) return undefined;
  const code = w.ctype[0].slice(5, 8).toUpperCase();
  if (w.ctype[1].slice(5, 8).toUpperCase() !== code) return undefined;
  if (!LON.test(w.ctype[0].slice(0, 4).toUpperCase()) || !LAT.test(w.ctype[1].slice(0, 4).toUpperCase())) return undefined;
  const p1 = px - w.crpix[0], p2 = py - w.crpix[1];
  const x = f1 * w.cdelt[0] * (w.pc[0] * p1 + w.pc[1] * p2);
  const y = f2 * w.cdelt[1] * (w.pc[2] * p1 + w.pc[3] * p2);
  const n = deproject(code, x, y, w.pv);
  if (!n) return undefined;
  const [lon, lat] = nativeToCelestial(n.phi, n.theta, w, n.phi0, n.theta0, [w.crval[0] * f1, w.crval[1] * f2]);
  return [((lon % 360) + 360) % 360, lat];
}

export interface PatchCentre {
  /** Stonyhurst heliographic longitude and latitude of the frame's centre pixel, degrees. */
  readonly lonDeg: number;
  readonly latDeg: number;
  /**
   * Angle at the Sun's centre between the patch centre and the point under the observer, degrees
   * (mu = cos of it); absent when the headers do not give the observer's latitude.
   */
  readonly diskAngleDeg?: number;
}

const lon180 = (d: number) => { const r = ((d % 360) + 540) % 360 - 180; return r === -180 ? 180 : r; };

/** Observer's Stonyhurst latitude (B0) and longitude, degrees, as the headers give them. */
function observer(k: KeywordRecord): { b0?: number; l0: number } {
  const b0 = num(k, 'HGLT_OBS') ?? num(k, 'CRLT_OBS');
  return { ...(b0 !== undefined && { b0 }), l0: num(k, 'HGLN_OBS') ?? 0 };
}

/**
 * Helioprojective (theta_x, theta_y, degrees) to Stonyhurst heliographic, for a point on the
 * visible surface (Thompson 2006, equations 15-16 solved for the near intersection, then 12);
 * undefined off the disk.
 */
export function helioprojectiveToStonyhurst(tx: number, ty: number, dsunMm: number, rsunMm: number, b0: number, l0: number): [number, number] | undefined {
  const c = cosd(ty) * cosd(tx);
  const disc = dsunMm * dsunMm * c * c - dsunMm * dsunMm + rsunMm * rsunMm;
  if (disc < 0) return undefined;
  const d = dsunMm * c - Math.sqrt(disc);
  const x = d * cosd(ty) * sind(tx);
  const y = d * sind(ty);
  const z = dsunMm - d * c;
  const r = Math.hypot(x, y, z);
  const lat = asind((y * cosd(b0) + z * sind(b0)) / r);
  const lon = l0 + atan2d(x, z * cosd(b0) - y * sind(b0));
  return [lon180(lon), lat];
}

/** Angle at the Sun's centre between a point and the sub-observer point, degrees. */
export function diskAngle(lon: number, lat: number, l0: number, b0: number): number {
  return acosd(sind(b0) * sind(lat) + cosd(b0) * cosd(lat) * cosd(lon - l0));
}

/**
 * The patch centre of a frame whose keywords carry a heliographic or helioprojective WCS (the
 * centre pixel ((nx+1)/2, (ny+1)/2)); undefined when they do not, or do not say where the
 * observer is for Carrington and helioprojective axes.
 */
export function patchCentre(k: KeywordRecord, nx: number, ny: number): PatchCentre | undefined {
  const w = frameWcs(k, nx, ny);
  if (!w) return undefined;
  const world = pixelToWorld(w, (nx + 1) / 2, (ny + 1) / 2);
  if (!world) return undefined;
  const kind = w.ctype[0].slice(0, 2).toUpperCase();
  const obs = observer(k);
  let lon: number, lat: number;
  if (kind === 'HG') {
    [lon, lat] = [lon180(world[0]), world[1]];
  } else if (kind === 'CR') {
    // Carrington to Stonyhurst: the observer's Carrington and Stonyhurst longitudes differ by L0.
    const crln = num(k, 'CRLN_OBS');
    if (crln === undefined) return undefined;
    [lon, lat] = [lon180(world[0] - (crln - obs.l0)), world[1]];
  } else if (kind === 'HP') {
    if (obs.b0 === undefined) return undefined;
    const dsun = (num(k, 'DSUN_OBS') ?? M_PER_AU) / 1e6;
    const rsun = (num(k, 'RSUN_REF') ?? SOLAR_RADIUS_MM * 1e6) / 1e6;
    const hg = helioprojectiveToStonyhurst(lon180(world[0]), world[1], dsun, rsun, obs.b0, obs.l0);
    if (!hg) return undefined;
    [lon, lat] = hg;
  } else {
    return undefined;
  }
  return { lonDeg: lon, latDeg: lat, ...(obs.b0 !== undefined && { diskAngleDeg: diskAngle(lon, lat, obs.l0, obs.b0) }) };
}

/**
 * The centre at the mid-time of two frames (a sample from a frame pair): the mean of their
 * centres, longitudes taken the short way round; the angle from disk centre only when both have it.
 */
export function meanCentre(a: PatchCentre | undefined, b: PatchCentre | undefined): PatchCentre | undefined {
  if (!a || !b) return undefined;
  const lon = lon180(a.lonDeg + lon180(b.lonDeg - a.lonDeg) / 2);
  return {
    lonDeg: lon, latDeg: (a.latDeg + b.latDeg) / 2,
    ...(a.diskAngleDeg !== undefined && b.diskAngleDeg !== undefined && { diskAngleDeg: (a.diskAngleDeg + b.diskAngleDeg) / 2 }),
  };
}

/** The patch centre of a frame from the keywords it kept (provenance), when they say. */
export function framePatchCentre(frame: { readonly nx: number; readonly ny: number; readonly provenance?: { readonly keywords?: KeywordRecord } }): PatchCentre | undefined {
  const k = frame.provenance?.keywords;
  return k ? patchCentre(k, frame.nx, frame.ny) : undefined;
}
