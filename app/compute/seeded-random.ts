// Seeded pseudo-random numbers for synthetic cohorts, simulation checks and benchmarks.
// The core may not use Math.random: every run with the same seed must give the same numbers.

/** Mulberry32: a small 32-bit generator, uniform on [0, 1). Good enough for simulation, not for secrets. */
export function mulberry32(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal draws by the Box–Muller transform (Box & Muller 1958), both variates used. */
export function gaussianSource(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const value = spare;
      spare = null;
      return value;
    }
    let u = uniform();
    while (u <= 0) u = uniform(); // log(0) guard
    const v = uniform();
    const radius = Math.sqrt(-2 * Math.log(u));
    spare = radius * Math.sin(2 * Math.PI * v);
    return radius * Math.cos(2 * Math.PI * v);
  };
}

/** Convenience: a seeded standard-normal generator. */
export function seededGaussian(seed: number): () => number {
  return gaussianSource(mulberry32(seed));
}
