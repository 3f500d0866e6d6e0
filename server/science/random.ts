/**
 * Deterministic pseudo-random numbers for seeds, simulations and distance draws.
 * Not cryptographic. Same seed → same sequence on every platform (32-bit integer arithmetic).
 */

/**
 * Mulberry32 generator (common practice, public-domain 32-bit generator with period 2^32).
 * Returns a function yielding uniform doubles in [0, 1).
 */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return function next(): number {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * Standard normal deviate by the Box–Muller transform (Box & Muller 1958, Ann. Math. Stat. 29, 610):
 * z = sqrt(−2 ln u1)·cos(2π u2), with u1 in (0, 1] so the logarithm is finite.
 * Uses two uniforms per call and discards the sine partner, so the sequence depends only on rng.
 */
export function gaussian(rng: () => number): number {
  const u1 = 1 - rng(); // (0, 1]
  const u2 = rng();
  return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
}

/**
 * Deterministic 32-bit seed from any mix of strings and numbers (FNV-1a over the parts'
 * text, each part separated by a unit separator, then a murmur3-style finaliser to spread bits).
 * hashSeed('field', 3) ≠ hashSeed('field3') ≠ hashSeed('fiel', 'd3').
 */
export function hashSeed(...parts: (string | number)[]): number {
  let h = 0x811c9dc5;
  for (const part of parts) {
    const text = typeof part === 'number' ? `n:${String(part)}` : `s:${part}`;
    for (let i = 0; i < text.length; i++) {
      h ^= text.charCodeAt(i);
      h = Math.imul(h, 0x01000193);
    }
    h ^= 0x1f;
    h = Math.imul(h, 0x01000193);
  }
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}
