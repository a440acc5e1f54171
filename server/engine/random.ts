/**
 * Seeded random draws for bootstrap weights and placebo sets: the 32-bit Mersenne Twister
 * (Matsumoto and Nishimura 1998) from @stdlib/random-base-mt19937. The same seed gives the
 * same sequence on every machine, so a stored run can be reproduced exactly. Never
 * Math.random.
 */
import mt19937 from '@stdlib/random-base-mt19937'

export interface SeededRandom {
  /** Uniform on [0, 1). */
  uniform(): number
  /** Uniform integer in 0..n-1 (n >= 1), without modulo bias. */
  int(n: number): number
  seed: number
}

const TWO_32 = 4294967296

export function seededRandom(seed: number): SeededRandom {
  if (!Number.isInteger(seed) || seed < 1 || seed >= TWO_32) throw new RangeError(`seededRandom: seed must be a whole number 1..2^32-1, got ${seed}`)
  const next = mt19937.factory({ seed: seed >>> 0 })
  return {
    seed,
    uniform: () => next() / TWO_32,
    int(n: number) {
      if (!(n >= 1) || !Number.isInteger(n) || n > TWO_32) throw new RangeError(`seededRandom.int: n must be a whole number 1..2^32, got ${n}`)
      // rejection sampling: accept draws below the largest multiple of n
      const limit = TWO_32 - (TWO_32 % n)
      for (;;) {
        const v = next()
        if (v < limit) return v % n
      }
    },
  }
}

/** k distinct indices from 0..n-1 (partial Fisher-Yates), sorted ascending. */
export function sampleWithoutReplacement(rng: SeededRandom, n: number, k: number): number[] {
  if (k > n) throw new RangeError(`sampleWithoutReplacement: cannot draw ${k} of ${n}`)
  const a = Array.from({ length: n }, (_, i) => i)
  for (let i = 0; i < k; i++) {
    const j = i + rng.int(n - i)
    const t = a[i]
    a[i] = a[j]
    a[j] = t
  }
  return a.slice(0, k).sort((x, y) => x - y)
}
