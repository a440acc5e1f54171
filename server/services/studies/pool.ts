/**
 * Saving pool decisions: each names a candidate and whether it is in the pool. Including a
 * flagged candidate overrides its flags and needs a reason (400 otherwise). Decisions are
 * upserted, audit-logged with the decisions before and after, and the re-scored table is
 * returned with a preview of the did estimate on the new pool.
 */
import { SUGGESTED_POOL_SIZE } from '#shared/schemas/studies'
import { eq, sql } from 'drizzle-orm'
import { jurisdictions, studies, studyPoolDecisions, type Study } from '~~/db/schema'
import type { z } from 'zod'
import type { poolPutSchema } from '#shared/schemas/studies'
import type { SessionUser } from '../../utils/auth'
import { isEngineError } from '~~/server/engine'
import { engineTask, packRows, rowsIdentity } from '~~/server/utils/enginePool'
import { canonicalJson } from './fingerprint'
import { assemblePool, candidateContext, type CandidateContext } from './candidates'
import { buildRunSpec } from './spec'

export async function savePool(study: Study, user: SessionUser, body: z.output<typeof poolPutSchema>, k = SUGGESTED_POOL_SIZE) {
  const ctx = await candidateContext(study)
  const issues: { path: string, message: string }[] = []
  const seen = new Set<string>()
  body.decisions.forEach((d, i) => {
    const flags = ctx.flags.get(d.jurisdiction)
    if (seen.has(d.jurisdiction)) issues.push({ path: `decisions.${i}.jurisdiction`, message: `${d.jurisdiction} is listed twice.` })
    seen.add(d.jurisdiction)
    if (!flags) issues.push({ path: `decisions.${i}.jurisdiction`, message: study.treated.includes(d.jurisdiction) ? `${d.jurisdiction} is treated in this study.` : `${d.jurisdiction} is not a candidate (no ${study.outcome} data).` })
    else if (d.included && flags.length && !d.reason) {
      issues.push({ path: `decisions.${i}.reason`, message: `${d.jurisdiction} is flagged (${flags.map(f => f.detail).join('; ')}): give a reason to include it.` })
    }
  })
  if (issues.length) badRequest(issues[0]!.message, issues)
  const db = useDb()
  // every decision names a candidate (checked above), and the context knows each candidate's id
  const ids = new Map(body.decisions.map(d => [d.jurisdiction, ctx.info.get(d.jurisdiction)!.id]))
  const decided = await db.transaction(async (tx) => {
    await lockStudyForChange(tx, study.id)
    const before = await tx.select({ code: jurisdictions.code, jurisdictionId: studyPoolDecisions.jurisdictionId, included: studyPoolDecisions.included, reason: studyPoolDecisions.reason })
      .from(studyPoolDecisions).innerJoin(jurisdictions, eq(jurisdictions.id, studyPoolDecisions.jurisdictionId))
      .where(eq(studyPoolDecisions.studyId, study.id))
    const values = body.decisions.map(d => ({ studyId: study.id, jurisdictionId: ids.get(d.jurisdiction)!, included: d.included, reason: d.reason, decidedBy: user.id, decidedAt: new Date() }))
    await tx.insert(studyPoolDecisions).values(values).onConflictDoUpdate({
      target: [studyPoolDecisions.studyId, studyPoolDecisions.jurisdictionId],
      set: { included: sql`excluded.included`, reason: sql`excluded.reason`, decidedBy: sql`excluded.decided_by`, decidedAt: sql`excluded.decided_at` },
    })
    await tx.update(studies).set({ updatedAt: new Date() }).where(eq(studies.id, study.id))
    await audit(tx, {
      userId: user.id, action: 'pool', entity: 'study', entityId: study.id,
      before: before.map(b => ({ jurisdictionId: b.jurisdictionId, included: b.included, reason: b.reason })),
      after: body.decisions,
    })
    // the decisions as they now stand (the study is locked: nobody else changed them)
    const now = new Map(before.map(b => [b.code, { jurisdiction: b.code, included: b.included, reason: b.reason }]))
    for (const d of body.decisions) now.set(d.jurisdiction, { jurisdiction: d.jurisdiction, included: d.included, reason: d.reason ?? null })
    return [...now.values()]
  })
  const pool = assemblePool(ctx, decided, k)
  return { ...pool, preview: await previewEstimate(ctx, pool.rows.filter(r => r.included).map(r => r.jurisdiction)) }
}

/**
 * A quick difference-in-differences on the rows already read, so the analyst sees at once
 * how the pool changes the estimate. Not stored: a run on the Estimates step is the record.
 * The effect carries the engine's headline inference (spec inference "auto": with one or a
 * few treated units, placebo units; DESIGN.md "honest inference"), so ciLow and ciHigh are
 * null when the pool is too small for the placebos to bound the effect at 95% (fewer than
 * 19 comparison units for one treated unit). `inference` says which method stands behind p
 * and the interval, and why.
 */
export async function previewEstimate(ctx: CandidateContext, pool: string[]) {
  const none = (error: string) => ({ design: 'did' as const, effect: null, nClusters: null, inference: null, warnings: [] as string[], error })
  if (!pool.length) return none('The pool is empty.')
  const keep = new Set([...ctx.study.treated, ...pool])
  const rows = ctx.data.rows.filter(r => keep.has(r.jurisdiction))
  const periods = [...new Set(rows.map(r => r.period))].sort()
  try {
    const spec = buildRunSpec(ctx.study, 'did', {}, pool, periods)
    // in an engine thread; kept for the same rows (the context's, chosen by the spec's units) and spec
    const result = await engineTask(() => ({ kind: 'estimate', rows: packRows(rows), spec }), `preview ${rowsIdentity(ctx.data)} ${canonicalJson(spec)}`, { readOnly: true }) // read-only: nothing here changes it
    const inf = result.inference
    return {
      design: 'did' as const,
      effect: result.effect,
      nClusters: result.nClusters,
      inference: inf ? { method: inf.method, reason: inf.reason, level: inf.level, p: inf.p, pMin: inf.pMin, draws: inf.draws } : null,
      warnings: result.warnings,
      error: null,
    }
  }
  catch (e) {
    if (!isEngineError(e)) throw e
    return none(e.message)
  }
}
