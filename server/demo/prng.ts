/**
 * Deterministic pseudo-random numbers for the demo generator (never Math.random): the same seed
 * always gives the same sequence on every machine, so the generated files are byte-identical.
 */

/** A seeded generator: `next()` is uniform in [0, 1), `gauss()` standard normal. */
export interface Prng {
  /** Uniform in [0, 1) with 32-bit resolution. */
  next(): number;
  /** Standard normal N(0, 1) (Box–Muller, one value per two uniforms). */
  gauss(): number;
  /** Uniform in [lo, hi). */
  uniform(lo: number, hi: number): number;
}

/**
 * 32-bit FNV-1a hash of a string's UTF-16 code units (offset basis 2166136261, prime 16777619; the
 * published FNV parameters). Used to derive independent seeds from names such as
 * `KV03/2026-03-14T09:26:40Z/traffic`.
 * @returns an unsigned 32-bit integer
 */
export function hashSeed(text: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h >>> 0;
}

/**
 * mulberry32, a small 32-bit state generator (public-domain algorithm by Tommy Ettinger, common
 * practice for seeded demo data; not for cryptography). Integer arithmetic via Math.imul only, so
 * the sequence is exact and platform independent.
 * @param seed any number; its low 32 bits are the state
 */
export function mulberry32(seed: number): Prng {
  let state = seed >>> 0;
  const next = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  let spare: number | undefined;
  const gauss = (): number => {
    if (spare !== undefined) {
      const s = spare;
      spare = undefined;
      return s;
    }
    // 1 − u keeps the logarithm's argument in (0, 1].
    const u = 1 - next();
    const v = next();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  return { next, gauss, uniform: (lo, hi) => lo + (hi - lo) * next() };
}

/** A generator seeded from a name (see {@link hashSeed}). */
export function prngFor(name: string): Prng {
  return mulberry32(hashSeed(name));
}
