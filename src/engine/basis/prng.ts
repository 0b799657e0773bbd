/**
 * Seeded pseudo-random numbers for the basis transforms (k-means++ seeding), so that the same seed
 * always gives the same centres on every machine.
 *
 * Method: a Weyl sequence (state += 0x9E3779B9, the 32-bit golden-ratio increment) passed through
 * the 32-bit MurmurHash3 finalizer (Appleby 2011, public domain) as the output mix; the period is
 * 2^32, ample for choosing a few dozen centres. Not for cryptography.
 */

/** A function returning uniform numbers in [0, 1). */
export type Uniform = () => number;

/**
 * Create a seeded uniform generator.
 * @param seed - any integer (taken modulo 2^32)
 * @example const u = seededUniform(1); u() === seededUniform(1)() // true
 */
export function seededUniform(seed: number): Uniform {
  let state = (Math.trunc(seed) >>> 0) ^ 0x5bd1e995;
  return () => {
    state = (state + 0x9e3779b9) >>> 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
    z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
    z = (z ^ (z >>> 16)) >>> 0;
    return z / 4294967296;
  };
}
