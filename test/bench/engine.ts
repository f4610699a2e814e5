// The core engine's figures: G_theta map and total, A_p, and the label split with 50
// footpoints, for 256^2, 512^2 and 1024^2 frames; peers timed in the same run by
// test/bench/peers/scipy_gtheta.py (Debian's python3-scipy), skipped with a message without it.
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { convolveField, helicityFlux } from '../../core/helicityFlux.js';
import { splitByLabels } from '../../core/labelSplit.js';
import { medianMs, rssMiB } from './_measure.js';

function syntheticFrame(n: number, footpoints: number) {
  // Footpoints of both polarities on a noisy background, each moving and turning a little.
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const d = 0.36;
  const size = n * n;
  const bn = new Float64Array(size), vx = new Float64Array(size), vy = new Float64Array(size);
  const labels = new Int32Array(size);
  for (let i = 0; i < size; i++) { bn[i] = 10 * (rnd() - 0.5); vx[i] = 0.1 * (rnd() - 0.5); vy[i] = 0.1 * (rnd() - 0.5); }
  for (let k = 0; k < footpoints; k++) {
    const cx = 8 + rnd() * (n - 16), cy = 8 + rnd() * (n - 16);
    const s = 1.5 + rnd() * 2.5, peak = (rnd() < 0.5 ? -1 : 1) * (600 + 1200 * rnd());
    const ux = rnd() - 0.5, uy = rnd() - 0.5, w = (rnd() - 0.5) * 0.05;
    const r = Math.ceil(3 * s);
    for (let y = Math.max(0, Math.floor(cy - r)); y < Math.min(n, cy + r); y++) for (let x = Math.max(0, Math.floor(cx - r)); x < Math.min(n, cx + r); x++) {
      const i = y * n + x, r2 = (x - cx) ** 2 + (y - cy) ** 2;
      if (r2 > r * r) continue;
      bn[i] += peak * Math.exp(-r2 / (2 * s * s));
      vx[i] = ux - w * (y - cy); vy[i] = uy + w * (x - cx);
      if (labels[i] === 0 && r2 < 4 * s * s) labels[i] = k + 1;
    }
  }
  return { time: 0, nx: n, ny: n, dx: d, dy: d, bn, vx, vy, labels };
}

function scipyPeers(sizes: number[]): Map<number, { fftconvolve_ms: number; rfft_cached_ms: number; scipy: string }> {
  const out = new Map();
  const script = fileURLToPath(new URL('../../../test/bench/peers/scipy_gtheta.py', import.meta.url));
  if (!existsSync('/usr/bin/python3')) { console.log('peers: skipped, /usr/bin/python3 is missing'); return out; }
  try {
    const text = execFileSync('/usr/bin/python3', [script, ...sizes.map(String)], { encoding: 'utf8', timeout: 300_000 });
    for (const line of text.trim().split('\n')) { const r = JSON.parse(line); out.set(r.n, r); }
  } catch (e) {
    console.log(`peers: skipped, scipy peer script failed (install python3-scipy): ${(e as Error).message.split('\n')[0]}`);
  }
  return out;
}

export async function bench(): Promise<void> {
  const sizes = [256, 512, 1024];
  const peers = scipyPeers(sizes);
  let peak = rssMiB();
  for (const n of sizes) {
    const f = syntheticFrame(n, 50);
    const t0 = performance.now();
    const kernel = createFluxKernel(f);
    const kernelMs = performance.now() - t0;
    const t = fluxTransport(f);
    const runs = n >= 1024 ? 5 : 9;
    const gtheta = medianMs(() => helicityFlux(kernel, t), runs);
    peak = Math.max(peak, rssMiB());
    const ap = medianMs(() => convolveField(kernel, t.bn), runs);
    const total = helicityFlux(kernel, t).total;
    let convolved = 0;
    const split = medianMs(() => { convolved = splitByLabels(kernel, t, f.labels, { total }).convolvedFootpoints; }, n >= 1024 ? 3 : 5, 1);
    peak = Math.max(peak, rssMiB());
    const p = peers.get(n);
    console.log(
      `${n}x${n}: G_theta map+total ${gtheta.toFixed(1)} ms | A_p ${ap.toFixed(1)} ms | label split (50 footpoints, ${convolved} by FFT) ${split.toFixed(1)} ms | kernel spectra (once per grid) ${kernelMs.toFixed(0)} ms`
      + (p ? ` | scipy ${p.scipy}: fftconvolve ${p.fftconvolve_ms.toFixed(1)} ms (ratio ${(p.fftconvolve_ms / gtheta).toFixed(2)}), rfft cached ${p.rfft_cached_ms.toFixed(1)} ms (ratio ${(p.rfft_cached_ms / gtheta).toFixed(2)})` : ''),
    );
  }
  console.log(`peak RSS ${peak.toFixed(0)} MiB (sampled after each stage; ratios > 1 mean helicord is faster)`);
}
