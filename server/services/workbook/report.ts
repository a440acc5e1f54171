/**
 * What the printable report of a run shows: the study and its question, the run's result,
 * the treated and comparison series drawn from the exact rows the run used, the validity
 * record, the releases behind the data, and the cautions. Built from the workbook's input,
 * so the report and the workbook always agree.
 */
import { allCautions } from '#shared/delivery/cautions'
import { readValidity } from '../validity'
import type { SessionUser } from '../../utils/auth'
import type { WorkbookPanelRow } from './build'
import { workbookInput } from './load'

/** Mean outcome by period of the treated units and of the comparison units (missing cells skipped). */
export function groupSeries(rows: readonly WorkbookPanelRow[], treated: readonly string[], key: string) {
  const isTreated = new Set(treated)
  const periods = [...new Set(rows.map(r => String(r.period)))].sort()
  const at = new Map(periods.map((p, i) => [p, i]))
  const sums = { treated: new Float64Array(periods.length), comparison: new Float64Array(periods.length) }
  const counts = { treated: new Int32Array(periods.length), comparison: new Int32Array(periods.length) }
  for (const r of rows) {
    const v = r.values[key]
    if (v == null || !Number.isFinite(v)) continue
    const g = isTreated.has(r.unit) ? 'treated' : 'comparison'
    const t = at.get(String(r.period))!
    sums[g][t]! += v
    counts[g][t]! += 1
  }
  const mean = (g: 'treated' | 'comparison') => periods.map((_, t) => (counts[g][t] ? sums[g][t]! / counts[g][t]! : null))
  return { periods, treated: mean('treated'), comparison: mean('comparison') }
}

export async function runReport(studyId: number, runId: number, user: SessionUser) {
  const input = await workbookInput(studyId, runId, user)
  const units = new Set(input.rows.map(r => r.unit))
  const comparison = [...units].filter(u => !input.study.treated.includes(u)).sort()
  return {
    study: input.study,
    run: input.run,
    outcomeHeader: input.panelColumns?.find(c => c.key === 'outcome')?.header ?? input.study.outcome,
    series: { ...groupSeries(input.rows, input.study.treated, 'outcome'), comparisonUnits: comparison },
    pool: input.pool,
    validity: await readValidity(useDb(), studyId),
    releases: input.releases,
    cautions: allCautions(input.run.result, input.study.treated.length),
    software: input.software,
    generatedAt: input.generated.at,
  }
}
