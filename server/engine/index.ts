/**
 * Counterpart's statistics engine: pure functions, no database, no web framework. Server
 * routes, background jobs, the command line (cli/counterpart.ts) and the tests call it.
 *
 * API
 *   estimate(panel: PanelInput, spec): EstimateResult
 *     Validates the spec (shared/engine/spec.ts), builds the panel and runs spec.design
 *     ("did", "event_study", "its", "pre_post", "synthetic": the weighted comparison with
 *     placebo inference; "staggered": group-time effects with influence-function errors).
 *     Returns the result JSON of shared/engine/result.ts.
 *   scoreDonors(panel: PanelInput, spec, weights?): DonorScores
 *     Pre-period fit of every comparison candidate against the treated unit(s), with ranks
 *     and a composite rank from the caller's weights (default 1 for each score).
 *   parseSpec(json): Spec            the validated spec with defaults, or EngineError
 *   recordsFromCsv(text): PanelInput long CSV text -> records
 *   tableFromCsv(text): PanelInput  long CSV text -> typed arrays (no object per row; the CLI's read)
 *   buildPanel(input, columns): Panel  build once and pass the Panel to several calls
 *
 * PanelInput is one of
 *   { records: Record<string, string>[], firstLine? }   parsed CSV rows (cells as text);
 *                                                       spec.unit / spec.period / spec.outcome
 *                                                       name the columns
 *   { table: CsvTable }                                 from tableFromCsv; columns named as for records
 *   { rows: { unit, period, values: { [column]: number | null } }[] }   typed rows, e.g. as
 *                                                       read from PostgreSQL; spec.outcome and
 *                                                       covariates name keys of `values`
 *   Panel                                               from buildPanel
 *
 * Every refusal is an EngineError with a stable `code` and a message naming the problem
 * (unknown unit or column, non-numeric cell with its line and column, no pre- or
 * post-periods, a single cluster, a singular design with the collinear terms, ...).
 */
import type { DonorScores } from '../../shared/engine/result'
import type { SpecInput } from '../../shared/engine/spec'
import { type DonorWeights, scoreDonorsOnPanel } from './donorScores'
import { panelFor, parseSpec } from './estimate'
import type { PanelInput } from './panel'

export function scoreDonors(input: PanelInput, specInput: SpecInput | unknown, weights?: DonorWeights): DonorScores {
  const spec = parseSpec(specInput)
  return scoreDonorsOnPanel(panelFor(input, spec), spec, weights)
}

export { estimate, parseSpec, panelFor, specColumns } from './estimate'
export { buildPanel, type Panel, type PanelInput, type TypedRow, type CsvRecord } from './panel'
export { recordsFromCsv } from './csv'
export { tableFromCsv } from './csvTable'
export { EngineError, isEngineError, type EngineErrorCode } from './errors'
export { donorScoreNames, rankMin, type DonorWeights } from './donorScores'
export type { EstimateResult, DonorScores, DonorScoreRow, Coefficient, Effect } from '../../shared/engine/result'
export type { Spec, SpecInput } from '../../shared/engine/spec'
