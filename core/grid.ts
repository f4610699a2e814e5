// The grid every map lives on: row-major, x varying fastest (index = iy*nx + ix, the order of a
// FITS image), +x along increasing column, +y along increasing row, pixel sides dx, dy in Mm.
// NaN in a map means "no data".

import { InputError } from './inputError.js';

export interface Grid {
  readonly nx: number;
  readonly ny: number;
  /** Pixel side along x, Mm. */
  readonly dx: number;
  /** Pixel side along y, Mm. */
  readonly dy: number;
}

/** A map on a grid: nx*ny values, row-major. */
export type MapArray = Float64Array | Float32Array;

/** Throws an InputError unless the grid has positive integer sizes and positive finite pixel sides. */
export function checkGrid(grid: Grid, source = 'grid'): void {
  const { nx, ny, dx, dy } = grid;
  if (!Number.isInteger(nx) || nx < 1) throw new InputError(source, 'nx', `must be a positive integer, got ${nx}`);
  if (!Number.isInteger(ny) || ny < 1) throw new InputError(source, 'ny', `must be a positive integer, got ${ny}`);
  if (!Number.isFinite(dx) || dx <= 0) throw new InputError(source, 'dx', `pixel size must be positive and finite (Mm), got ${dx}`);
  if (!Number.isFinite(dy) || dy <= 0) throw new InputError(source, 'dy', `pixel size must be positive and finite (Mm), got ${dy}`);
}

/** Throws an InputError unless `map` holds exactly nx*ny values. */
export function checkMapSize(grid: Grid, map: ArrayLike<number>, field: string, source = 'frame'): void {
  if (map.length !== grid.nx * grid.ny) {
    throw new InputError(source, field, `has ${map.length} values but nx*ny = ${grid.nx}*${grid.ny} = ${grid.nx * grid.ny}`);
  }
}

/** True when two grids have the same shape and pixel size (to 1e-9 relative). */
export function sameGrid(a: Grid, b: Grid): boolean {
  const close = (p: number, q: number) => Math.abs(p - q) <= 1e-9 * Math.max(Math.abs(p), Math.abs(q));
  return a.nx === b.nx && a.ny === b.ny && close(a.dx, b.dx) && close(a.dy, b.dy);
}
