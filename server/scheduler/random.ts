// Seeded pseudo-random numbers (mulberry32) so the engine is repeatable for a given seed.

/** A small seeded generator: next() in [0, 1), int(n) in [0, n). */
export interface Rng {
  next(): number
  int(n: number): number
}

/** Creates a mulberry32 generator from a 32-bit seed. */
export function createRng(seed: number): Rng {
  let a = seed >>> 0 || 0x9e3779b9
  const next = (): number => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  return { next, int: (n: number) => Math.floor(next() * n) }
}
