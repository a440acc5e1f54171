/**
 * Seeded uniform draws for the benchmarks' invented panels and load mix, from the engine's own
 * generator (server/engine/random.ts), so every run sees the same data. seed >= 1.
 */
import { seededRandom } from '../server/engine/random'

export function uniforms(seed: number): () => number {
  const r = seededRandom(seed)
  return () => r.uniform()
}
