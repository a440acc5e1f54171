/** The shapes the upload validator works with. Pure. */
import type { MeasureFrequency } from '../../../../shared/schemas/registry'
import type { UploadProblem } from '../../../../shared/schemas/uploads'

export interface MeasureInfo { id: number, key: string, label: string, unit: string, frequency: MeasureFrequency }

export interface Registry {
  jurisdictions: Map<string, number>
  measures: Map<string, MeasureInfo>
}

/** A measure the import must create (a rate the registry does not have yet). */
export interface NewMeasure { key: string, label: string, unit: string, kind: 'outcome', frequency: MeasureFrequency }

/** Observations as parallel arrays (the bulk insert sends them as they are). */
export interface Observations {
  length: number
  jurisdictionIds: Int32Array
  /** Index into measureKeys. */
  measureIndex: Uint16Array
  measureKeys: string[]
  periods: string[]
  values: Float64Array
}

export interface Validation {
  ok: boolean
  problems: UploadProblem[]
  /** All problems found; `problems` keeps the first MAX_PROBLEMS. */
  problemCount: number
  warnings: string[]
  observations: Observations
  newMeasures: NewMeasure[]
  summary: {
    rows: number
    observations: number
    blanks: number
    jurisdictions: number
    measures: Record<string, number>
    firstPeriod: string | null
    lastPeriod: string | null
  }
}

export type Report = (row: number | null, column: string | null, problem: string) => void

/** A period read from a cell: its canonical text and a small integer naming it. */
export interface PeriodSlot { canonical: string, slot: number }

export function emptyObservations(): Observations {
  return { length: 0, jurisdictionIds: new Int32Array(0), measureIndex: new Uint16Array(0), measureKeys: [], periods: [], values: new Float64Array(0) }
}
