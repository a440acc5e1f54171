/**
 * What the printable report of a run shows: the study and its question, the run's result,
 * the treated and comparison series drawn from the exact rows the run used, the validity
 * record, the releases behind the data, and the cautions. Built from the workbook's input,
 * so the report and the workbook always agree.
 */
import { allCautions } from '#shared/delivery/cautions'
import { readValidity } from '../validity'
import type { SessionUser } from '../../utils/auth'
import { groupSeries } from './series'
import { workbookInput } from './load'

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
    robustness: input.robustness ?? [],
    threatEvidence: input.threatEvidence ?? null,
    releases: input.releases,
    cautions: allCautions(input.run.result, input.study.treated.length),
    software: input.software,
    generatedAt: input.generated.at,
  }
}
