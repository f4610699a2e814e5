// The one place where units are converted. Inside core: B in gauss, lengths in Mm,
// velocities in km/s, flux in Mx (G cm^2), helicity in Mx^2, rates in Mx^2/s.

/** Centimetres per megametre. */
export const CM_PER_MM = 1e8;
/** Centimetres per kilometre (so km/s times this is cm/s). */
export const CM_PER_KM = 1e5;
/** Kilometres per megametre. */
export const KM_PER_MM = 1e3;
/** Solar radius in Mm used for heliographic degrees (R = 696 Mm; the conversion is shown in docs/fits.md). */
export const SOLAR_RADIUS_MM = 696;
/** Mm per degree of heliographic arc on the solar surface: 2 pi R / 360 = 12.147 Mm. */
export const MM_PER_HELIOGRAPHIC_DEG = (2 * Math.PI * SOLAR_RADIUS_MM) / 360;

/** Pixel area in cm^2 from pixel sides in Mm. */
export function pixelAreaCm2(dxMm: number, dyMm: number): number {
  return dxMm * CM_PER_MM * dyMm * CM_PER_MM;
}

/** Magnetic flux in Mx of a pixel of field bG gauss and sides in Mm. */
export function pixelFluxMx(bG: number, dxMm: number, dyMm: number): number {
  return bG * pixelAreaCm2(dxMm, dyMm);
}

/** km/s to cm/s. */
export function kmPerSToCmPerS(v: number): number {
  return v * CM_PER_KM;
}

/** Mm to cm. */
export function mmToCm(x: number): number {
  return x * CM_PER_MM;
}

/**
 * Length in Mm from a value with a FITS unit string (CUNIT); undefined when unknown. Unit strings
 * are case-sensitive as in the FITS standard: 'Mm' is the megametre, 'mm' the millimetre.
 */
export function lengthToMm(value: number, unit: string): number | undefined {
  switch (unit.trim()) {
    case 'Mm': return value;
    case 'km': return value / KM_PER_MM;
    case 'm': return value / (KM_PER_MM * 1e3);
    case 'cm': return value / CM_PER_MM;
    case 'mm': return value / (CM_PER_MM * 10);
    default: return undefined;
  }
}

/** Velocity in km/s from a value with a unit string; undefined when unknown. */
export function velocityToKmPerS(value: number, unit: string): number | undefined {
  switch (unit.trim().toLowerCase().replace(/\s+/g, '')) {
    case 'km/s': case 'km.s**-1': case 'km s-1': case 'kms-1': return value;
    case 'm/s': case 'm.s**-1': case 'ms-1': return value / 1e3;
    case 'cm/s': case 'cm.s**-1': return value / CM_PER_KM;
    default: return undefined;
  }
}

/** Metres per astronomical unit (IAU 2012 resolution B2, exact). */
export const M_PER_AU = 149597870700;

/** Angle in radians from a value with a FITS unit string (deg, arcmin, arcsec, mas, rad); undefined when unknown. */
export function angleToRadians(value: number, unit: string): number | undefined {
  switch (unit.trim().toLowerCase()) {
    case 'deg': case 'degree': case 'degrees': return (value * Math.PI) / 180;
    case 'arcmin': return (value * Math.PI) / (180 * 60);
    case 'arcsec': return (value * Math.PI) / (180 * 3600);
    case 'mas': return (value * Math.PI) / (180 * 3600e3);
    case 'rad': return value;
    default: return undefined;
  }
}

/** Magnetic field in G from a FITS unit string: G and Mx/cm^2 alike (1 Mx cm^-2 = 1 G), T, mT, nT; undefined when unknown. */
export function fieldToGauss(value: number, unit: string): number | undefined {
  switch (unit.trim().replace(/\s+/g, ' ')) {
    case 'G': case 'gauss': case 'Gauss': case 'GAUSS':
    case 'Mx/cm^2': case 'Mx/cm2': case 'Mx cm-2': case 'Mx.cm**-2': case 'Mx cm**-2': case 'Mx/cm**2': case 'Mx cm^-2':
      return value;
    case 'T': return value * 1e4;
    case 'mT': return value * 10;
    case 'nT': return value * 1e-5;
    default: return undefined;
  }
}
