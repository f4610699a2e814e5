// The engine benchmark's synthetic frame: footpoints of both polarities on a noisy background,
// each moving and turning a little, with their labels (a fixed seed: the same frame every run).
export function syntheticFrame(n: number, footpoints: number) {
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
