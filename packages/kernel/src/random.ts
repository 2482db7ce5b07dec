/**
 * Seeded pseudo-random numbers (mulberry32: 32-bit state, period 2^32), so sampled points and
 * perturbed meshes are reproducible bit for bit. Each call of `seededUniform` owns its state.
 */
export function seededUniform(seed: number): () => number {
  let a = (Math.floor(seed) >>> 0) ^ 0x9e3779b9;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
