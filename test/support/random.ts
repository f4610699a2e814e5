// Seeded deviates for fixed, repeatable test inputs: the demo region's mulberry32 source serves here too.
import { uniformSource } from '../../replay/demo/seededNoise.js';

export const seededRandom = uniformSource;

/** Standard normal deviates by Box-Muller from a seeded uniform source. */
export function seededNormal(seed: number): () => number {
  const u = uniformSource(seed);
  return () => Math.sqrt(-2 * Math.log(u() || 1e-300)) * Math.cos(2 * Math.PI * u());
}
