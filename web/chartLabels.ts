// Where the charts put their words: the raised-alert markers along the top (moments closer than a
// marker's width become one numbered marker; their labels go in lanes so no two overlap) and the
// threshold labels (beside their line, at a place no drawn curve crosses, else in the key under
// the chart). Pure geometry in canvas pixels, tested without a browser.

export interface Box {
  x: number;
  y: number;
  w: number;
  h: number;
}

export function boxesOverlap(a: Box, b: Box): boolean {
  return a.x < b.x + b.w && b.x < a.x + a.w && a.y < b.y + b.h && b.y < a.y + a.h;
}

/** True when no two of the boxes overlap (the probe and the tests use it). */
export function noOverlap(boxes: readonly Box[]): boolean {
  for (let i = 0; i < boxes.length; i++) for (let j = i + 1; j < boxes.length; j++) if (boxesOverlap(boxes[i], boxes[j])) return false;
  return true;
}

export interface Moment {
  /** Canvas x of the moment. */
  px: number;
  label: string;
}

export interface MomentCluster {
  /** Canvas x of the marker: the mean of its moments. */
  px: number;
  labels: string[];
}

/** Moments within `minGapPx` of the previous one join its cluster (input in any order). */
export function clusterMoments(moments: readonly Moment[], minGapPx: number): MomentCluster[] {
  const sorted = moments.slice().sort((a, b) => a.px - b.px);
  const out: { xs: number[]; labels: string[] }[] = [];
  for (const m of sorted) {
    const last = out.at(-1);
    if (last && m.px - last.xs[last.xs.length - 1] < minGapPx) {
      last.xs.push(m.px);
      if (!last.labels.includes(m.label)) last.labels.push(m.label);
    } else out.push({ xs: [m.px], labels: [m.label] });
  }
  return out.map((c) => ({ px: c.xs.reduce((s, x) => s + x, 0) / c.xs.length, labels: c.labels }));
}

/**
 * Label boxes for markers at the given x positions: each label tries the right of its marker, then
 * the left, in lane 0, 1, ... (lane k at top + k * height); a label that fits in no lane is left
 * out (undefined: the marker stays, the log has the words). Boxes stay inside [left, right],
 * clear of `blocked` (the markers themselves, other labels) and, given `curves`, of the drawn curves.
 */
export function placeMarkerLabels(
  items: readonly { px: number; width: number }[], height: number, top: number, left: number, right: number, lanes: number, blocked: readonly Box[],
  curves?: CurveColumns,
): (Box | undefined)[] {
  const taken = blocked.slice();
  return items.map(({ px, width }) => {
    for (let lane = 0; lane < lanes; lane++) {
      const y = top + lane * height;
      for (const x of [px + 9, px - 9 - width]) {
        if (x < left || x + width > right) continue;
        const box = { x, y, w: width, h: height };
        if (taken.some((b) => boxesOverlap(b, box)) || (curves !== undefined && boxHitsCurves(curves, box))) continue;
        taken.push(box);
        return box;
      }
    }
    return undefined;
  });
}

/** Per canvas column of the plot, the lowest and highest y any drawn curve reaches there. */
export interface CurveColumns {
  left: number;
  min: Float32Array;
  max: Float32Array;
}

/** The columns [left, right) covered by polylines (canvas pixels; null y breaks a line), widened by pad px. */
export function curveColumns(lines: readonly (readonly { x: number; y: number | null }[])[], left: number, right: number, pad = 2): CurveColumns {
  const n = Math.max(0, Math.ceil(right - left));
  const min = new Float32Array(n).fill(Infinity);
  const max = new Float32Array(n).fill(-Infinity);
  // Exact for straight segments: in each column the segment spans the y between its values at the
  // column's two edges (clamped to the segment's ends).
  const mark = (x0: number, y0: number, x1: number, y1: number): void => {
    const xa = Math.min(x0, x1);
    const xb = Math.max(x0, x1);
    const yAt = (x: number): number => (xb === xa ? y0 : y0 + ((Math.max(xa, Math.min(xb, x)) - x0) / (x1 - x0)) * (y1 - y0));
    const a = Math.max(0, Math.floor(xa - left - pad));
    const b = Math.min(n - 1, Math.ceil(xb - left + pad));
    for (let c = a; c <= b; c++) {
      const e0 = c + left - pad;
      const e1 = c + 1 + left + pad;
      const ya = xb === xa ? Math.min(y0, y1) : Math.min(yAt(e0), yAt(e1));
      const yb = xb === xa ? Math.max(y0, y1) : Math.max(yAt(e0), yAt(e1));
      min[c] = Math.min(min[c], ya - pad);
      max[c] = Math.max(max[c], yb + pad);
    }
  };
  for (const line of lines) {
    let prev: { x: number; y: number } | undefined;
    for (const p of line) {
      if (p.y === null || !Number.isFinite(p.y)) {
        prev = undefined;
        continue;
      }
      const cur = { x: p.x, y: p.y };
      if (prev) mark(prev.x, prev.y, cur.x, cur.y);
      else mark(cur.x, cur.y, cur.x, cur.y);
      prev = cur;
    }
  }
  return { left, min, max };
}

/** True when any curve passes through the box. */
export function boxHitsCurves(cols: CurveColumns, box: Box): boolean {
  const a = Math.max(0, Math.floor(box.x - cols.left));
  const b = Math.min(cols.min.length - 1, Math.ceil(box.x + box.w - cols.left));
  for (let c = a; c <= b; c++) {
    if (cols.max[c] >= box.y && cols.min[c] <= box.y + box.h) return true;
  }
  return false;
}

/**
 * A place for a threshold's label beside its line at canvas y `lineY`: above or below the line, at
 * the right end, the left end or the middle of the plot, wherever no curve passes and nothing
 * taken lies; undefined when no such place exists (the label goes to the key under the chart).
 */
export function placeThresholdLabel(
  lineY: number, width: number, height: number, plot: { left: number; right: number; top: number; bottom: number }, cols: CurveColumns, taken: readonly Box[],
): Box | undefined {
  const xs = [plot.right - 4 - width, plot.left + 4, (plot.left + plot.right - width) / 2];
  const ys = [lineY - height - 2, lineY + 3];
  for (const x of xs) {
    for (const y of ys) {
      if (x < plot.left || x + width > plot.right || y < plot.top || y + height > plot.bottom) continue;
      const box = { x, y, w: width, h: height };
      if (boxHitsCurves(cols, box) || taken.some((b) => boxesOverlap(b, box))) continue;
      return box;
    }
  }
  return undefined;
}
