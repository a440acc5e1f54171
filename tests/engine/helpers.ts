// Shared helpers for the engine tests: reference cases from tests/fixtures/reference and the
// tolerances its README states.
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { expect } from 'vitest'
import { recordsFromCsv } from '../../server/engine/csv'
import type { PanelInput } from '../../server/engine/panel'
import { EngineError } from '../../server/engine/errors'

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..')
export const referenceDir = path.join(repoRoot, 'tests/fixtures/reference')

// The expected.json files are R output; their shape is documented in the fixtures' README.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export type Expected = any

export function loadCase(name: string): { panel: PanelInput; expected: Expected; source: string } {
  const dir = path.join(referenceDir, name)
  return {
    panel: recordsFromCsv(readFileSync(path.join(dir, 'panel.csv'), 'utf8')),
    expected: JSON.parse(readFileSync(path.join(dir, 'expected.json'), 'utf8')),
    source: readFileSync(path.join(dir, 'README.md'), 'utf8').trim(),
  }
}

/** Estimates, SEs, statistics, means, scores: |got - exp| <= 1e-6 |exp| + 1e-10. */
export function near(got: number | null | undefined, exp: number, label: string): void {
  expect(got, label).toBeTypeOf('number')
  const tol = 1e-6 * Math.abs(exp) + 1e-10
  expect(Math.abs((got as number) - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(tol)
}

/** p-values: |got - exp| <= 1e-6 |exp| + 1e-12. */
export function nearP(got: number | null | undefined, exp: number, label: string): void {
  expect(got, label).toBeTypeOf('number')
  const tol = 1e-6 * Math.abs(exp) + 1e-12
  expect(Math.abs((got as number) - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(tol)
}

/** Confidence bounds: |got - exp| <= 1e-6 (|exp| + se). */
export function nearCi(got: number, exp: number, se: number, label: string): void {
  expect(Math.abs(got - exp), `${label}: got ${got}, expected ${exp}`).toBeLessThanOrEqual(1e-6 * (Math.abs(exp) + se))
}

/** Our smallSample choices and the reference's names for the same CR0 multipliers. */
export const clusterVariants = [
  ['nested', 'CR1_Knested'],
  ['full', 'CR1_Kfull'],
  ['slopes', 'CR1_Kslopes'],
  ['clusters', 'CR1_G'],
  ['none', 'CR0'],
] as const

/** Units whose `column` is 1 in some row of the panel. */
export function unitsWith(panel: PanelInput, column: string): string[] {
  if (!('records' in panel)) throw new Error('unitsWith: records expected')
  return [...new Set(panel.records.filter((r) => r[column] === '1').map((r) => String(r.unit)))].sort()
}

/** Asserts that f throws an EngineError with this code and a message matching `message`. */
export function fails(f: () => unknown, code: string, message: RegExp): EngineError {
  let caught: unknown
  try {
    f()
  } catch (e) {
    caught = e
  }
  expect(caught, 'expected an EngineError').toBeInstanceOf(EngineError)
  expect((caught as EngineError).message).toMatch(message)
  expect((caught as EngineError).code).toBe(code)
  return caught as EngineError
}
