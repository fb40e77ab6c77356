/**
 * mulberry32: a 32-bit state generator of uniforms on [0, 1) (T. Ettinger, public domain; common
 * practice for small reproducible simulations). Keelson's one seeded generator: the bootstrap,
 * the demo-data generator, tests and benchmarks all draw from it, so a seed means the same
 * sequence everywhere.
 *
 * @param seed any number; its low 32 bits are the state.
 * @returns a function giving the next uniform draw on [0, 1).
 * @example
 * mulberry32(1)() // → 0.6270739405881613 on every platform
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * Standard normal draws from a uniform generator by the Box–Muller transform (Box and Muller 1958,
 * Annals of Mathematical Statistics 29(2), 610–611), using both values of each pair.
 *
 * @param uniform draws on [0, 1), e.g. `mulberry32(seed)`; a draw of exactly 0 is skipped.
 * @returns a function giving the next standard normal draw.
 */
export function boxMuller(uniform: () => number): () => number {
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = uniform();
    const v = uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}
