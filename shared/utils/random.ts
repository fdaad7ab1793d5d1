/**
 * Mulberry32: a small, fast pseudo-random generator that gives the same sequence on every
 * platform for a given seed. Uniform on [0, 1). For demo data, synthetic test signals and
 * benchmark corpora, never for anything secret.
 */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6D2B79F5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}
