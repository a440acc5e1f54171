/**
 * What the engine thread does: each task calls the engine (server/engine) exactly as the web
 * process would, on rows packed by packedRows.ts. The same function runs inside the thread
 * and, where no thread bundle exists (tests, scripts from source), in-process
 * (server/utils/enginePool.ts). Pure: the engine and node:crypto only.
 *
 *   estimate        estimate(rows, spec)                           -> EstimateResult
 *   run             parseSpec(spec), estimate, and the fingerprint of the rows under the
 *                   parsed spec (fingerprint.ts)                   -> { spec, result, fingerprint }
 *                   With rowsKey (what identifies the rows: their source and the releases
 *                   they came from, which never change once imported), the hash of the rows
 *                   is kept and reused for the next run on the same rows, whatever its spec.
 *   scoreDonors     scoreDonors(rows, spec)                        -> DonorScores
 *   threatEvidence  threatEvidence(input)                          -> ThreatEvidence[]
 */
import { estimate, parseSpec, scoreDonors, type EstimateResult, type Spec } from '../../engine'
import { threatEvidence, type ThreatInput } from '../../engine/threats'
import type { DonorScores } from '../../../shared/engine/result'
import type { ThreatEvidence } from '../../../shared/engine/threats'
import type { Hash } from 'node:crypto'
import { fingerprintWith, hashRows, type StudyRow } from '../studies/fingerprint'
import { unpackRows, type PackedRows } from './packedRows'

export type EngineTask =
  | { kind: 'estimate', rows: PackedRows, spec: unknown }
  | { kind: 'run', rows: PackedRows, spec: unknown, rowsKey?: string }
  | { kind: 'scoreDonors', rows: PackedRows, spec: unknown }
  | { kind: 'threatEvidence', input: ThreatInput }

export interface RunOutcome { spec: Spec, result: EstimateResult, fingerprint: string }

export interface EngineAnswers {
  estimate: EstimateResult
  run: RunOutcome
  scoreDonors: DonorScores
  threatEvidence: ThreatEvidence[]
}

/** Hashes of rows by rowsKey, least recently used dropped first. */
const rowHashes = new Map<string, Hash>()
const ROW_HASHES_KEPT = 64

function rowsHash(rows: readonly StudyRow[], key: string | undefined): Hash {
  if (key === undefined) return hashRows(rows)
  let hash = rowHashes.get(key)
  if (hash) rowHashes.delete(key)
  else {
    hash = hashRows(rows)
    if (rowHashes.size >= ROW_HASHES_KEPT) rowHashes.delete(rowHashes.keys().next().value!)
  }
  rowHashes.set(key, hash)
  return hash
}

const engineRows = (rows: readonly StudyRow[]) => rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values }))

export function runEngineTask(task: EngineTask): EngineAnswers[EngineTask['kind']] {
  switch (task.kind) {
    case 'estimate':
      return estimate({ rows: engineRows(unpackRows(task.rows)) }, task.spec)
    case 'run': {
      const rows = unpackRows(task.rows)
      const spec = parseSpec(task.spec)
      const result = estimate({ rows: engineRows(rows) }, spec)
      return { spec, result, fingerprint: fingerprintWith(rowsHash(rows, task.rowsKey), spec) }
    }
    case 'scoreDonors':
      return scoreDonors({ rows: engineRows(unpackRows(task.rows)) }, task.spec)
    case 'threatEvidence':
      return threatEvidence(task.input)
  }
}
