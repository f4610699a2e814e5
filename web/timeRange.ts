// The time range the charts show: everything, the last N hours (following new samples), or a
// fixed span the user dragged out or panned to. The exports follow the same range.

import { formatUtc } from './unitFormat.js';

export type TimeView =
  | { readonly kind: 'all' }
  | { readonly kind: 'last'; readonly spanMs: number }
  | { readonly kind: 'fixed'; readonly from: number; readonly to: number };

export const ALL: TimeView = { kind: 'all' };
const HOUR_MS = 3_600_000;
/** The narrowest span a drag can select: one minute (a drag is not a click). */
export const MIN_SPAN_MS = 60_000;

/** The last `hours` hours, following the newest sample. */
export function lastHours(hours: number): TimeView {
  return { kind: 'last', spanMs: hours * HOUR_MS };
}

/** The [from, to] the charts show for a series spanning [first, last] ms; undefined without samples. */
export function viewRange(view: TimeView, first: number | undefined, last: number | undefined): [number, number] | undefined {
  if (first === undefined || last === undefined || !Number.isFinite(first) || !Number.isFinite(last)) {
    return view.kind === 'fixed' ? [view.from, view.to] : undefined;
  }
  switch (view.kind) {
    case 'all':
      return [first, last];
    case 'last':
      return [Math.max(first, last - view.spanMs), last];
    case 'fixed':
      return [view.from, view.to];
  }
}

/** A fixed view between two times (either order); spans under MIN_SPAN_MS widen about their middle. */
export function fixedView(a: number, b: number): TimeView {
  let from = Math.min(a, b);
  let to = Math.max(a, b);
  if (to - from < MIN_SPAN_MS) {
    const mid = (from + to) / 2;
    from = mid - MIN_SPAN_MS / 2;
    to = mid + MIN_SPAN_MS / 2;
  }
  return { kind: 'fixed', from, to };
}

/**
 * The view moved by `fraction` of its span (negative: earlier), kept inside the series: a pan
 * stops at the first and the last sample rather than showing empty time.
 */
export function panView(view: TimeView, first: number, last: number, fraction: number): TimeView {
  const range = viewRange(view, first, last);
  if (!range) return view;
  const span = range[1] - range[0];
  if (span <= 0 || span >= last - first) return view;
  let from = range[0] + fraction * span;
  from = Math.max(first, Math.min(last - span, from));
  return { kind: 'fixed', from, to: from + span };
}

/** The view in words for the range bar and the export titles. */
export function viewLabel(view: TimeView, range: [number, number] | undefined): string {
  if (view.kind === 'all') return range ? `all: ${formatUtc(range[0], false)} – ${formatUtc(range[1], false)}` : 'all';
  if (view.kind === 'last') return `last ${Math.round(view.spanMs / HOUR_MS)} h${range ? `: ${formatUtc(range[0], false)} – ${formatUtc(range[1], false)}` : ''}`;
  return `${formatUtc(view.from, false)} – ${formatUtc(view.to, false)}`;
}

/** Index range [start, end) of the sorted times inside [from, to] (binary searches). */
export function indexRange(times: ArrayLike<number>, from: number, to: number): [number, number] {
  const lower = (v: number, strict: boolean): number => {
    let lo = 0;
    let hi = times.length;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (strict ? times[mid] <= v : times[mid] < v) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  };
  return [lower(from, false), lower(to, true)];
}
