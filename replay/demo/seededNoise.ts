// Seeded, random-access noise for the demo region: frame i of seed s always gets the same deviates,
// whatever order frames are asked for in (so a worker can make any frame on its own).

/** A 32-bit hash of two integers (the mixing steps of murmur3's finaliser), for per-frame seeds. */
export function mixSeed(seed: number, index: number): number {
  let h = (Math.imul(seed | 0, 0x9e3779b1) ^ Math.imul(index | 0, 0x85ebca77)) >>> 0;
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** Uniform deviates in [0, 1) from a seed (mulberry32). */
export function uniformSource(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Adds Gaussian noise of standard deviation `sigma` to `map` in place (Box-Muller, both deviates used). */
export function addGaussianNoise(map: Float64Array, sigma: number, seed: number): void {
  if (!(sigma > 0)) return;
  const u = uniformSource(seed);
  for (let i = 0; i < map.length; i += 2) {
    const r = sigma * Math.sqrt(-2 * Math.log(1 - u()));
    const a = 2 * Math.PI * u();
    map[i] += r * Math.cos(a);
    if (i + 1 < map.length) map[i + 1] += r * Math.sin(a);
  }
}
