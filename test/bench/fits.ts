// FITS decode speed: a 1024^2 RICE_1 quantized float frame and a 4096^2 uncompressed float32
// frame (targets 150 ms and 300 ms). Inputs are made with our own writer and Rice encoder.
import { readFitsImage } from '../../core/fits/readImage.js';
import { writeFits } from '../../core/fits/writeImage.js';
import { frameFromFits } from '../../core/frameAssembly/assembleFrame.js';
import { seededNormal } from '../support/random.js';
import { medianMs, rssMiB } from './_measure.js';

function field(n: number, seed: number): Float32Array {
  const noise = seededNormal(seed);
  const out = new Float32Array(n * n);
  for (let y = 0; y < n; y++) {
    for (let x = 0; x < n; x++) {
      // Two spots of opposite sign on a noisy background, like a magnetogram.
      const a = Math.exp(-((x - 0.4 * n) ** 2 + (y - 0.5 * n) ** 2) / (0.01 * n * n));
      const b = Math.exp(-((x - 0.6 * n) ** 2 + (y - 0.5 * n) ** 2) / (0.01 * n * n));
      out[y * n + x] = 1500 * (a - b) + 10 * noise();
    }
  }
  return out;
}

export async function bench(): Promise<void> {
  const keywords = [{ key: 'DATE-OBS', value: '2011-02-15T00:00:00' }];
  const wcs = { cdelt: [0.36, 0.36] as [number, number] };

  const n1 = 1024;
  const f1 = field(n1, 1);
  let t = performance.now();
  const rice = writeFits({ images: [{ name: 'BN', nx: n1, ny: n1, values: f1, bunit: 'G', wcs, keywords, compression: { type: 'RICE_1' } }] });
  const encodeMs = performance.now() - t;
  const riceMs = medianMs(() => readFitsImage(rice, 'rice.fits', { extname: 'BN' }), 7, 2);
  const riceFrameMs = medianMs(() => frameFromFits(rice, 'rice.fits'), 5, 1);
  console.log(`RICE_1 float ${n1}^2 (${(rice.length / 1048576).toFixed(2)} MiB, ${(4 * n1 * n1 / rice.length).toFixed(2)}x smaller than float32): decode median ${riceMs.toFixed(1)} ms (target 150), as a frame ${riceFrameMs.toFixed(1)} ms; encode once ${encodeMs.toFixed(0)} ms`);

  const n2 = 4096;
  const f2 = field(n2, 2);
  t = performance.now();
  const plain = writeFits({ images: [{ name: 'BN', nx: n2, ny: n2, values: f2, bunit: 'G', wcs, keywords }] });
  const writeMs = performance.now() - t;
  const plainMs = medianMs(() => readFitsImage(plain, 'plain.fits', { extname: 'BN' }), 5, 1);
  const plainFrameMs = medianMs(() => frameFromFits(plain, 'plain.fits'), 3, 1);
  const into = new Float64Array(n2 * n2);
  const plainIntoMs = medianMs(() => readFitsImage(plain, 'plain.fits', { extname: 'BN' }, { into }), 5, 1);
  const allocMs = medianMs(() => { const a = new Float64Array(n2 * n2); for (let i = 0; i < a.length; i += 512) a[i] = 1; return a; }, 5, 1);
  console.log(`float32 ${n2}^2 (${(plain.length / 1048576).toFixed(0)} MiB): decode median ${plainMs.toFixed(1)} ms (target 300), into a reused buffer ${plainIntoMs.toFixed(1)} ms, as a frame ${plainFrameMs.toFixed(1)} ms; write once ${writeMs.toFixed(0)} ms`);
  console.log(`  (touching a fresh ${n2}^2 Float64Array alone takes ${allocMs.toFixed(1)} ms here)`);
  console.log(`rss now ${rssMiB().toFixed(0)} MiB`);
}
