/**
 * Saving pool decisions: each names a candidate and whether it is in the pool. Including a
 * flagged candidate overrides its flags and needs a reason (400 otherwise). Decisions are
 * upserted, audit-logged with the decisions before and after, and the re-scored table is
 * returned with a preview of the did estimate on the new pool.
 */
import { SUGGESTED_POOL_SIZE } from '#shared/schemas/studies'
import type { Study } from '~~/db/schema'
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
  // every decision names a candidate (checked above), and the context knows each candidate's id
  const ids = new Map(body.decisions.map(d => [d.jurisdiction, ctx.info.get(d.jurisdiction)!.id]))
  type Before = { code: string, jurisdiction_id: number, included: boolean, reason: string | null }
  const decided = await changeStudy<Before, { jurisdiction: string, included: boolean, reason: string | null }[]>(study.id,
    `SELECT j.code, d.jurisdiction_id, d.included, d.reason FROM study_pool_decisions d JOIN jurisdictions j ON j.id = d.jurisdiction_id
     WHERE d.study_id = ${STUDY_ID}`,
    async (client, before) => {
      // the decisions, the study's time of change and the audit entry in one statement
      await client.query({
        name: 'pool_save',
        text: `WITH d AS (SELECT * FROM json_to_recordset($2::json) AS x(jurisdiction_id integer, included boolean, reason text)),
         up AS (
           INSERT INTO study_pool_decisions (study_id, jurisdiction_id, included, reason, decided_by, decided_at)
           SELECT $1, jurisdiction_id, included, reason, $3, now() FROM d
           ON CONFLICT (study_id, jurisdiction_id) DO UPDATE
             SET included = excluded.included, reason = excluded.reason, decided_by = excluded.decided_by, decided_at = excluded.decided_at),
         touched AS (UPDATE studies SET updated_at = now() WHERE id = $1)
         INSERT INTO audit_log (user_id, action, entity, entity_id, before, after) VALUES ($3, 'pool', 'study', $1::text, $4::jsonb, $5::jsonb)`,
        values: [study.id, JSON.stringify(body.decisions.map(d => ({ jurisdiction_id: ids.get(d.jurisdiction)!, included: d.included, reason: d.reason ?? null }))), user.id,
          JSON.stringify(before.map(b => ({ jurisdictionId: b.jurisdiction_id, included: b.included, reason: b.reason }))), JSON.stringify(body.decisions)],
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
