/**
 * Computed evidence on the threats to validity of a study, for the Validity step, the workbook
 * and the printed report. Gathers the study's data the way the Trends step does (the pool as
 * decided, the treated and pool mean series, the event study with its lead test), every
 * candidate's series (selection), the neighbour flags from the registry's neighbour links
 * (diffusion), and the values published in more than one release (instrumentation), then
 * calls the engine (server/engine/threats). The evidence is a starting point: the analyst
 * writes the assessment.
 *
 *   studyEvidence(study) -> { threats: (ThreatEvidence & { label })[], periods, pool, neighbours, ... }
 *   Throws 400 when the study's data cannot be read for it (no pre- or post-periods, no data).
 */
import { THREATS } from '#shared/schemas/validity'
import type { ThreatEvidence } from '#shared/engine/threats'
import { isEngineError } from '~~/server/engine'
import type { RevisedCell } from '~~/server/engine/threats'
import { engineTask } from '~~/server/utils/enginePool'
import { candidateContext, includedPool, poolDecisions } from '../studies/candidates'
import { OUTCOME } from '../studies/rows'
import { studyTrends } from '../studies/trends'
import type { WorkbookThreatEvidence } from '../workbook/threatEvidenceSheet'
import type { Study } from '~~/db/schema'

export type LabelledEvidence = ThreatEvidence & { label: string }

export interface StudyEvidence {
  threats: LabelledEvidence[]
  periods: { first: string, start: string, last: string, pre: number, post: number }
  pool: string[]
  neighbours: string[]
  note: string
}

export const EVIDENCE_NOTE = 'Computed evidence is a starting point, not a verdict on the study: each figure rests on simple checks with their own assumptions. The analyst writes the assessment, and the agency\'s evaluation standards and qualified review decide.'

/** Values of the study's cells published in more than one release, oldest first. */
async function revisedCells(measures: string[], units: string[], from: string | null, to: string | null): Promise<RevisedCell[]> {
  if (!units.length || !measures.length) return []
  const { rows } = await usePool().query<{ code: string, period: string, key: string, values: number[] }>(`
    SELECT j.code, o.period, m.key, array_agg(o.value ORDER BY o.release_id) AS values
    FROM observations o
    JOIN measures m ON m.id = o.measure_id
    JOIN jurisdictions j ON j.id = o.jurisdiction_id
    JOIN source_releases r ON r.id = o.release_id AND r.status = 'done'
    WHERE m.key = ANY($1::text[]) AND j.code = ANY($2::text[])
      AND ($3::text IS NULL OR o.period >= $3) AND ($4::text IS NULL OR o.period <= $4)
    GROUP BY j.code, o.period, m.key
    HAVING count(*) > 1`, [measures, units, from, to])
  return rows.map(r => ({ unit: r.code, period: r.key === measures[0] ? r.period : `${r.period} (${r.key})`, values: r.values.map(Number) }))
}

const toSeries = (xs: (number | null)[]) => Float64Array.from(xs, v => (v == null ? NaN : v))

export async function studyEvidence(study: Study): Promise<StudyEvidence> {
  const [ctx, decisions] = await Promise.all([candidateContext(study), poolDecisions(study.id)])
  const pool = includedPool(ctx, decisions)
  const trends = await studyTrends(study)
  const periods = trends.periods
  const firstPost = trends.prePeriods.findIndex(pre => !pre)
  const nPre = firstPost < 0 ? periods.length : firstPost
  if (nPre < 1 || nPre >= periods.length) {
    badRequest(`The evidence needs periods both before and after the start; this study's data have ${nPre} before and ${periods.length - nPre} from the start on.`)
  }
  const at = new Map(periods.map((p, i) => [p, i]))
  const byUnit = new Map<string, Float64Array>()
  for (const r of ctx.data.rows) {
    const t = at.get(r.period)
    if (t === undefined) continue
    let s = byUnit.get(r.jurisdiction)
    if (!s) byUnit.set(r.jurisdiction, (s = new Float64Array(periods.length).fill(NaN)))
    const v = r.values[OUTCOME]
    s[t] = v == null ? NaN : v
  }
  const seriesOf = (unit: string) => ({ unit, values: byUnit.get(unit) ?? new Float64Array(periods.length).fill(NaN) })
  const neighbours = ctx.candidates.filter(c => ctx.flags.get(c)?.some(f => f.reason === 'neighbour') && byUnit.has(c))
  const isNeighbour = new Set(neighbours)
  const measures = [study.outcome, ...(study.transform === 'rate' && study.denominator ? [study.denominator] : [])]
  const revisions = await revisedCells(measures, [...study.treated, ...pool, ...neighbours], ctx.source.from, ctx.source.to)
  let evidence: ThreatEvidence[]
  try {
    evidence = await engineTask({ kind: 'threatEvidence', input: { // in an engine thread
      series: { periods, nPre, treated: toSeries(trends.treated.levels), pool: toSeries(trends.pool.levels) },
      treatedUnits: study.treated,
      leads: { points: trends.eventStudy, placeboP: trends.leadTest.placebo?.p ?? null, waldP: trends.leadTest.wald?.p ?? null, waldReliable: trends.leadTest.fReliable },
      revisions,
      candidates: ctx.candidates.filter(c => byUnit.has(c)).map(seriesOf),
      neighbours: neighbours.map(seriesOf),
      distant: pool.filter(c => !isNeighbour.has(c)).map(seriesOf),
    } })
  }
  catch (e) {
    if (isEngineError(e)) badRequest(e.message)
    throw e
  }
  const labels = new Map<string, string>(THREATS.map(t => [t.key, t.label]))
  return {
    threats: evidence.map(e => ({ ...e, label: labels.get(e.threat) ?? e.threat })),
    periods: { first: periods[0]!, start: periods[nPre]!, last: periods[periods.length - 1]!, pre: nPre, post: periods.length - nPre },
    pool,
    neighbours,
    note: EVIDENCE_NOTE,
  }
}

/**
 * The evidence for the workbook and report: computed now, or the reason it could not be. A
 * failure here never stops the workbook or the report: the sheet and the section say it was
 * not computed (with the data's reason for a 400; any other failure is logged).
 */
export async function evidenceForWorkbook(study: Study): Promise<WorkbookThreatEvidence> {
  try {
    const e = await studyEvidence(study)
    return { threats: e.threats, computedAt: new Date(), note: e.note }
  }
  catch (err) {
    if ((err as { statusCode?: number }).statusCode === 400) return { threats: null, reason: `Not computed: ${(err as Error).message}` }
    console.error('threat evidence for the workbook failed', err)
    return { threats: null, reason: 'Not computed: the evidence could not be computed for this study; see the Validity step.' }
  }
}
