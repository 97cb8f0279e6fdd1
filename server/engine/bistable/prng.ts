/**
 * mulberry32: a small 32-bit seeded generator, good enough for Monte Carlo
 * tolerance spreads (not for anything needing cryptographic quality).
 * Returns a function yielding uniform numbers in [0, 1); never throws.
 * Example: const next = seededUniform(7); next() and a second seededUniform(7)() are equal.
 */
export function seededUniform(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let mixed = state;
    mixed = Math.imul(mixed ^ (mixed >>> 15), mixed | 1);
    mixed ^= mixed + Math.imul(mixed ^ (mixed >>> 7), mixed | 61);
    return ((mixed ^ (mixed >>> 14)) >>> 0) / 4294967296;
  };
}
