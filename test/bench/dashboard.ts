// The dashboard's data handling in Node (the browser test measures the same code inside
// Chromium, with chart.js and the canvas): after a new sample with 20,000 held, the merge and the
// decimation of every line; a 1024^2 map decoded from base64 and coloured.
import { Buffer } from 'node:buffer';
import { bandFromBreaks, breaksBefore, decimateMinMax, lineFromBreaks } from '../../web/decimate.js';
import { decodeFloat32Base64 } from '../../web/float32Base64.js';
import { buildLut, PURPLE_ORANGE, rasterize, robustAbsLimit } from '../../web/colourScale.js';
import { mergeSamples } from '../../web/seriesMerge.js';
import type { WireSample } from '../../web/wire.js';
import { medianMs, rssMiB } from './_measure.js';

function sample(i: number, t0: number): WireSample {
  const r = 3e36 * Math.sin(i / 500) + 1e36 * Math.sin(i / 17);
  return {
    time: new Date(t0 + i * 60_000).toISOString(), dt_s: 60, rate_total: r, rate_spin: 0.6 * r, rate_orbit: 0.4 * r, rate_background: 0,
    budget_total: r * i, budget_spin: 0, budget_orbit: 0, budget_background: 0, rate_total_ga: r, rate_emergence: null, rate_shear: null,
    sigma_rate_total: 1e35, sigma_budget_total: 1e39, velocity_method: 'given', split_method: 'labels', noise_g: 5, masked_fraction: 0, flags: [], frame_id: i,
    sigma_rate_spin: 0, sigma_rate_orbit: 0, flux_unsigned: null, budget_normalised: null, centre_lon_deg: null, centre_lat_deg: null, centre_disk_angle_deg: null,
  };
}

export async function bench(): Promise<void> {
  const n = 20_000;
  const t0 = Date.UTC(2026, 0, 1);
  const wire = Array.from({ length: n + 1 }, (_, i) => sample(i, t0));
  const held = mergeSamples([], wire.slice(0, n));
  const mergeMs = medianMs(() => mergeSamples(held, [wire[n]]), 9);
  const series = mergeSamples(held, [wire[n]]);
  const times = Float64Array.from(series, (p) => p.t);
  const pick = (f: keyof WireSample): (number | null)[] => series.map((p) => p.s[f] as number | null);
  const total = pick('rate_total');
  const spin = pick('rate_spin');
  const orbit = pick('rate_orbit');
  const sigma = pick('sigma_rate_total');
  const buckets = 1000;
  const decimateMs = medianMs(() => {
    const flags = breaksBefore(times, [], Infinity);
    for (const v of [total, spin, orbit]) decimateMinMax(lineFromBreaks(times, v, flags), buckets);
    bandFromBreaks(times, total, sigma, flags, buckets);
  }, 9);
  console.log(`series of ${n + 1} samples: merge of one new sample ${mergeMs.toFixed(2)} ms, breaks + 3 lines + band decimated to ${buckets} buckets ${decimateMs.toFixed(2)} ms (medians of 9)`);

  const size = 1024;
  const map = new Float32Array(size * size);
  for (let i = 0; i < map.length; i++) map[i] = 1500 * Math.sin(i / 9000) * Math.cos((i % size) / 40);
  const text = Buffer.from(map.buffer).toString('base64');
  const decodeMs = medianMs(() => decodeFloat32Base64(text, map.length), 5);
  const lut = buildLut(PURPLE_ORANGE);
  const rgba = new Uint8ClampedArray(4 * map.length);
  const rasterMs = medianMs(() => rasterize(map, size, size, lut, robustAbsLimit(map), rgba), 5);
  console.log(`map ${size}x${size}: base64 decode (our decoder, Node has no Uint8Array.fromBase64) ${decodeMs.toFixed(1)} ms, limit + colour raster ${rasterMs.toFixed(1)} ms (medians of 5); rss ${rssMiB().toFixed(0)} MiB`);
}
