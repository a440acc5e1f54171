/**
 * What the typed jsonb columns of db/schema.ts hold. Types only ($type<...>() changes no SQL):
 * the shapes the services write, so a row read back needs no cast.
 */
import type { PoolRow } from '../shared/schemas/studies'

/** Everything needed to read a study's rows again exactly. Stored with each run (study_runs.data.source). */
export interface RowSource {
  outcome: string
  covariates: string[]
  denominator: string | null
  transform: 'level' | 'log' | 'rate'
  /** Jurisdiction codes to read; empty = every jurisdiction with data. */
  units: string[]
  from: string | null
  to: string | null
  /** Also keep the raw count and its denominator per row (COUNT, EXPOSURE), for count models. */
  counts?: boolean
}

/** A release a run read, as listed with the run. */
export interface RunRelease { id: number, source: string, label: string | null, importedAt: string | null }

/** What a run stores in study_runs.data: how to read its rows again and the pool as it stood. */
export interface RunData {
  source: RowSource
  frequency: string
  releases: RunRelease[]
  pool: PoolRow[]
}

/** A study's first treated period: one for every treated unit, or one per unit (staggered). */
export type StudyStart = string | Record<string, string>

/** A dated intervention on a jurisdiction (a later phase of the policy, or a related change). */
export interface StudyIntervention { jurisdiction: string, period: string, label: string }

/** The pre- and post-period a study analyses, each as [first, last] period. */
export interface StudyWindow { pre: [string, string], post: [string, string] }
