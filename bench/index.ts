/**
 * `npm run bench`: runs every benchmark and prints median times against their targets.
 *
 * Contract for a benchmark module: bench/engine.ts, and any bench/*.bench.ts file (e.g. a
 * future bench/import.bench.ts), exports
 *
 *   export async function run(): Promise<BenchFigure[]>
 *
 * where each figure is { name, medianMs, target } with `target` the goal in milliseconds
 * (DESIGN.md, "Quality bars"), or null when there is none. Exit status 1 if a figure misses
 * its target, so the numbers can gate a release.
 */
import { readdirSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'

export interface BenchFigure {
  name: string
  medianMs: number
  /** Goal in milliseconds, or null. */
  target: number | null
}

export type BenchModule = { run: () => Promise<BenchFigure[]> }

/** Median wall time in ms of `runs` calls of f, after one warm-up call. */
export async function medianMs(f: () => unknown, runs: number): Promise<number> {
  await f()
  const times: number[] = []
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now()
    await f()
    times.push(performance.now() - t0)
  }
  times.sort((a, b) => a - b)
  const m = times.length >> 1
  return times.length % 2 ? times[m] : (times[m - 1] + times[m]) / 2
}

async function main(): Promise<number> {
  const here = path.dirname(fileURLToPath(import.meta.url))
  const files = ['engine.ts', ...readdirSync(here).filter((f) => f.endsWith('.bench.ts')).sort()]
  let missed = 0
  const pad = (s: string, n: number) => s.padEnd(n)
  console.log(`${pad('benchmark', 72)} ${'median'.padStart(10)} ${'target'.padStart(10)}`)
  for (const f of files) {
    const mod = (await import(pathToFileURL(path.join(here, f)).href)) as BenchModule
    if (typeof mod.run !== 'function') throw new Error(`bench/${f} does not export run()`)
    for (const fig of await mod.run()) {
      const over = fig.target !== null && fig.medianMs > fig.target
      if (over) missed++
      const target = fig.target === null ? '-' : `${fig.target} ms`
      console.log(`${pad(fig.name, 72)} ${`${fig.medianMs.toFixed(1)} ms`.padStart(10)} ${target.padStart(10)}${over ? '  MISSED' : ''}`)
    }
  }
  return missed ? 1 : 0
}

const invokedDirectly = process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)
// no top-level await: bench modules import medianMs from this file while main() runs
if (invokedDirectly) void main().then((code) => (process.exitCode = code))
