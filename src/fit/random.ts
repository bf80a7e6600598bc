/** Small seeded generators (mulberry32, common practice), so multi-start runs, benchmarks and Monte Carlo tests are reproducible. */

/** Uniform deviates in [0, 1). */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates by Box–Muller on mulberry32 (uniforms shifted by half a step, so never 0). */
export function seededNormal(seed: number): () => number {
  const next = seededRandom(seed);
  const uniform = () => next() + 0.5 / 4294967296;
  return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
}
