// Connected components of a class map: neighbouring pixels with the same non-zero class share a
// component (so positive and negative polarity never join). Components are numbered 1..count in
// the raster order (x fastest) of their first pixel; 0 stays background.

export interface Components {
  /** Component number per pixel, 0 = background. */
  readonly labels: Int32Array;
  readonly count: number;
}

/** 4 = edge neighbours only, 8 = edge and corner neighbours. */
export type Connectivity = 4 | 8;

function findRoot(parent: Int32Array, i: number): number {
  while (parent[i] !== i) {
    parent[i] = parent[parent[i]];
    i = parent[i];
  }
  return i;
}

/** Two-pass union-find labelling of `classes` (0 = background) on an nx*ny row-major grid. */
export function connectedComponents(classes: ArrayLike<number>, nx: number, ny: number, connectivity: Connectivity = 8): Components {
  const n = nx * ny;
  if (classes.length !== n) throw new RangeError(`classes has ${classes.length} values, expected ${n}`);
  const parent = new Int32Array(n);
  for (let i = 0; i < n; i++) parent[i] = i;
  const join = (a: number, b: number) => {
    const ra = findRoot(parent, a), rb = findRoot(parent, b);
    // The smaller index becomes the root, so a root is always the component's first pixel.
    if (ra < rb) parent[rb] = ra; else if (rb < ra) parent[ra] = rb;
  };
  for (let y = 0; y < ny; y++) {
    for (let x = 0; x < nx; x++) {
      const i = y * nx + x;
      const c = classes[i];
      if (c === 0 || Number.isNaN(c)) continue;
      if (x > 0 && classes[i - 1] === c) join(i, i - 1);
      if (y > 0) {
        const up = i - nx;
        if (classes[up] === c) join(i, up);
        if (connectivity === 8) {
          if (x > 0 && classes[up - 1] === c) join(i, up - 1);
          if (x < nx - 1 && classes[up + 1] === c) join(i, up + 1);
        }
      }
    }
  }
  const labels = new Int32Array(n);
  let count = 0;
  for (let i = 0; i < n; i++) {
    const c = classes[i];
    if (c === 0 || Number.isNaN(c)) continue;
    const r = findRoot(parent, i);
    labels[i] = r === i ? ++count : labels[r];
  }
  return { labels, count };
}
