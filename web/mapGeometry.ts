// Geometry of the boundary map on the page: where a point in Mm lands on the canvas (the map keeps
// its true aspect in Mm, +y up), which footpoint a click is on, and the arc of a rotation glyph.

export interface MapFit {
  /** Canvas pixels per data pixel along x and y. */
  sx: number;
  sy: number;
  /** Canvas position of the map's top-left corner. */
  offX: number;
  offY: number;
  nx: number;
  ny: number;
  /** Data pixel size, Mm. */
  dx: number;
  dy: number;
}

/** Largest placement of an nx*ny map of pixel size dx*dy (Mm) inside width*height, centred. */
export function fitMap(nx: number, ny: number, dx: number, dy: number, width: number, height: number): MapFit {
  const k = Math.min(width / (nx * dx), height / (ny * dy));
  const sx = k * dx;
  const sy = k * dy;
  return { sx, sy, offX: (width - nx * sx) / 2, offY: (height - ny * sy) / 2, nx, ny, dx, dy };
}

/** Canvas position of (x, y) in Mm. Pixel ix covers x from ix*dx - dx/2 to ix*dx + dx/2 (x = ix*dx at
 *  the pixel centre); data row 0 is at the bottom. */
export function toCanvas(fit: MapFit, xMm: number, yMm: number): [number, number] {
  return [fit.offX + (xMm / fit.dx + 0.5) * fit.sx, fit.offY + (fit.ny - (yMm / fit.dy + 0.5)) * fit.sy];
}

/** Inverse of toCanvas: Mm of a canvas position. */
export function fromCanvas(fit: MapFit, px: number, py: number): [number, number] {
  return [((px - fit.offX) / fit.sx - 0.5) * fit.dx, (fit.ny - (py - fit.offY) / fit.sy - 0.5) * fit.dy];
}

/** Radius in Mm of a disc of the given area (Mm²). */
export function equalAreaRadius(areaMm2: number): number {
  return areaMm2 > 0 && Number.isFinite(areaMm2) ? Math.sqrt(areaMm2 / Math.PI) : 0;
}

export interface Locatable {
  id: number | string;
  x: number;
  y: number;
  area: number;
}

/**
 * The footpoint a click at (x, y) Mm is on: the nearest centroid within its equal-area radius, or
 * within minRadiusMm for small ones. undefined when the click is on none.
 */
export function hitFootpoint<T extends Locatable>(footpoints: readonly T[], xMm: number, yMm: number, minRadiusMm: number): T | undefined {
  let best: T | undefined;
  let bestD = Infinity;
  for (const fp of footpoints) {
    const d = Math.hypot(fp.x - xMm, fp.y - yMm);
    const r = Math.max(equalAreaRadius(fp.area), minRadiusMm);
    if (d <= r && d < bestD) {
      best = fp;
      bestD = d;
    }
  }
  return best;
}

/** A rotation rate that draws as a full glyph (|omega| at or above this, deg/h). */
export const GLYPH_FULL_DEG_PER_H = 20;

export interface GlyphArc {
  /** Canvas angles (radians, canvas y down) of the arc's start and end; the arrowhead is at the end. */
  start: number;
  end: number;
  /** Canvas arc direction: true for counter-clockwise on screen. */
  anticlockwise: boolean;
}

/**
 * Arc of the rotation glyph: counter-clockwise on screen for omega > 0 (counter-clockwise seen from
 * the corona, since the map is drawn +y up), sweeping from 40° to 320° as |omega| grows to
 * GLYPH_FULL_DEG_PER_H. undefined for an unmeasured rate.
 */
export function glyphArc(omegaDegPerHour: number | null): GlyphArc | undefined {
  if (omegaDegPerHour === null || !Number.isFinite(omegaDegPerHour)) return undefined;
  const frac = Math.min(1, Math.abs(omegaDegPerHour) / GLYPH_FULL_DEG_PER_H);
  const sweep = ((40 + 280 * frac) * Math.PI) / 180;
  const start = -Math.PI / 2; // top of the footpoint
  const ccw = omegaDegPerHour > 0;
  // Canvas angles grow clockwise on screen (y down), so counter-clockwise means decreasing angle.
  return { start, end: ccw ? start - sweep : start + sweep, anticlockwise: ccw };
}

/**
 * A track cut into runs where one step jumps further than maxStepMm: such a jump is the tracker
 * handing the id to another concentration, not motion (photospheric flows move a footpoint well
 * under 1 Mm between frames minutes apart), and a line across the map would mislead.
 */
export function splitTrack(points: readonly (readonly [number, number])[], maxStepMm: number): [number, number][][] {
  const runs: [number, number][][] = [];
  let run: [number, number][] = [];
  for (let i = 0; i < points.length; i++) {
    const p: [number, number] = [points[i][0], points[i][1]];
    if (i > 0 && Math.hypot(p[0] - points[i - 1][0], p[1] - points[i - 1][1]) > maxStepMm) {
      if (run.length > 0) runs.push(run);
      run = [];
    }
    run.push(p);
  }
  if (run.length > 0) runs.push(run);
  return runs;
}
