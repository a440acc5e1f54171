/**
 * Studies: list, create, read and edit. Every payload is checked against the registry:
 * the outcome, covariate and denominator measures and the treated jurisdictions must exist
 * (400 naming the missing ones, with the field each belongs to), and dates must be of the
 * outcome's frequency.
 */
import { desc, eq, inArray, sql } from 'drizzle-orm'
import { jurisdictions, measures, studies, studyPoolDecisions, users, type Study } from '~~/db/schema'
import { refineStudy, type studyCreateSchema, type studyPatchSchema } from '#shared/schemas/studies'
import { parsePeriod } from '#shared/utils/periods'
import { z } from 'zod'
import type { SessionUser } from '../../utils/auth'
import { editState } from './access'
import { refuseArchived } from './archivedRefs'

type Create = z.output<typeof studyCreateSchema>
type Patch = z.output<typeof studyPatchSchema>
type Fields = Omit<Create, never>

/** The owners and outcomes that occur among the studies, for the list's filters. */
export async function studyFilterOptions() {
  const db = useDb()
  const [owners, outcomes] = await Promise.all([
    db.selectDistinct({ id: users.id, name: users.name }).from(studies).innerJoin(users, eq(users.id, studies.ownerId)).orderBy(users.name),
    db.selectDistinct({ key: studies.outcome, label: measures.label }).from(studies).leftJoin(measures, eq(measures.key, studies.outcome)).orderBy(studies.outcome),
  ])
  return { owners, outcomes: outcomes.map(o => ({ key: o.key, label: o.label ?? o.key })) }
}

export async function listStudies(query: { status?: string, mine?: string, owner?: number, outcome?: string }, user: SessionUser) {
  const db = useDb()
  const lastRun = sql<{ id: number, design: string, createdAt: string, estimate: number | null } | null>`(
    select json_build_object('id', r.id, 'design', r.design, 'createdAt', r.created_at, 'estimate', (r.result->'effect'->>'estimate')::float8)
    from study_runs r where r.study_id = "studies"."id" order by r.id desc limit 1)`
  const where = and2(
    query.status ? eq(studies.status, query.status as Study['status']) : undefined,
    query.mine ? eq(studies.ownerId, user.id) : undefined,
    query.owner ? eq(studies.ownerId, query.owner) : undefined,
    query.outcome ? eq(studies.outcome, query.outcome) : undefined,
  )
  return db.select({
    id: studies.id, title: studies.title, status: studies.status, outcome: studies.outcome, transform: studies.transform,
    treated: studies.treated, ownerId: studies.ownerId, owner: users.name, version: studies.version,
    updatedAt: studies.updatedAt, createdAt: studies.createdAt, lastRun,
  }).from(studies).innerJoin(users, eq(users.id, studies.ownerId)).where(where).orderBy(desc(studies.updatedAt))
}

function and2(...c: (ReturnType<typeof eq> | undefined)[]) {
  const list = c.filter(Boolean) as ReturnType<typeof eq>[]
  return list.length ? sql.join(list, sql` and `) : undefined
}

/** Checks that every named measure and jurisdiction exists and the dates fit the outcome's frequency. */
async function checkReferences(s: Fields) {
  const db = useDb()
  const issues: { path: string, message: string }[] = []
  const keys = [s.outcome, ...s.covariates, ...(s.denominator ? [s.denominator] : [])]
  const found = await db.select({ key: measures.key, frequency: measures.frequency }).from(measures).where(inArray(measures.key, keys))
  const freq = new Map(found.map(m => [m.key, m.frequency]))
  const missing: string[] = []
  const need = (key: string, path: string) => {
    if (!freq.has(key)) {
      missing.push(`measure "${key}"`)
      issues.push({ path, message: `No measure with key "${key}".` })
    }
  }
  need(s.outcome, 'outcome')
  s.covariates.forEach((c, i) => need(c, `covariates.${i}`))
  if (s.denominator) need(s.denominator, 'denominator')
  const outcomeFreq = freq.get(s.outcome)
  if (outcomeFreq) {
    s.covariates.forEach((c, i) => {
      if (freq.has(c) && freq.get(c) !== outcomeFreq) issues.push({ path: `covariates.${i}`, message: `"${c}" is recorded by ${freq.get(c)}, the outcome by ${outcomeFreq}.` })
    })
    if (s.denominator && freq.has(s.denominator) && freq.get(s.denominator) !== outcomeFreq) issues.push({ path: 'denominator', message: `"${s.denominator}" is recorded by ${freq.get(s.denominator)}, the outcome by ${outcomeFreq}.` })
    const checkFreq = (p: string, path: string) => {
      if (parsePeriod(p).frequency !== outcomeFreq) issues.push({ path, message: `${p} is not a ${outcomeFreq}: ${s.outcome} is recorded by ${outcomeFreq}.` })
    }
    if (typeof s.start === 'string') checkFreq(s.start, 'start')
    else for (const [code, p] of Object.entries(s.start)) checkFreq(p, `start.${code}`)
    s.interventions.forEach((iv, i) => checkFreq(iv.period, `interventions.${i}.period`))
    if (s.window) {
      checkFreq(s.window.pre[0], 'window.pre.0')
      checkFreq(s.window.pre[1], 'window.pre.1')
      checkFreq(s.window.post[0], 'window.post.0')
      checkFreq(s.window.post[1], 'window.post.1')
    }
  }
  const codes = [...new Set([...s.treated, ...s.interventions.map(i => i.jurisdiction)])]
  const known = new Set((await db.select({ code: jurisdictions.code }).from(jurisdictions).where(inArray(jurisdictions.code, codes))).map(r => r.code))
  s.treated.forEach((c, i) => {
    if (!known.has(c)) {
      missing.push(`jurisdiction "${c}"`)
      issues.push({ path: `treated.${i}`, message: `No jurisdiction with code "${c}".` })
    }
  })
  s.interventions.forEach((iv, i) => {
    if (!known.has(iv.jurisdiction)) issues.push({ path: `interventions.${i}.jurisdiction`, message: `No jurisdiction with code "${iv.jurisdiction}".` })
  })
  if (issues.length) {
    badRequest(missing.length ? `Not found: ${[...new Set(missing)].join(', ')}.` : `Invalid study: ${issues[0]!.path}: ${issues[0]!.message}`, issues)
  }
}

export async function createStudy(user: SessionUser, body: Create) {
  await checkReferences(body)
  await refuseArchived(body)
  return useDb().transaction(async (tx) => {
    const [row] = await tx.insert(studies).values({ ...body, ownerId: user.id }).returning()
    await audit(tx, { userId: user.id, action: 'create', entity: 'study', entityId: row!.id, after: row })
    return row!
  })
}

export async function getStudy(study: Study, user: SessionUser) {
  const codes = [...new Set([...study.treated, ...study.interventions.map(i => i.jurisdiction)])]
  const keys = [study.outcome, ...study.covariates, ...(study.denominator ? [study.denominator] : [])]
  // the owner's name, the units' names and the measures in one query (named: parsed and planned once a connection)
  type Measure = { key: string, label: string, unit: string, frequency: string }
  const { rows: [found] } = await usePool().query<{ owner: string | null, names: Record<string, string>, measures: Record<string, Measure> }>({ name: 'study_names', text: `SELECT
      (SELECT name FROM users WHERE id = $1) AS owner,
      (SELECT coalesce(json_object_agg(code, name), '{}') FROM jurisdictions WHERE code = ANY($2::text[])) AS names,
      (SELECT coalesce(json_object_agg(key, json_build_object('key', key, 'label', label, 'unit', unit, 'frequency', frequency)), '{}')
         FROM measures WHERE key = ANY($3::text[])) AS measures`, values: [study.ownerId, codes, keys] })
  return {
    ...study,
    owner: found?.owner ?? null,
    names: found?.names ?? {},
    measures: found?.measures ?? {},
    ...editState(study, user),
  }
}

export async function updateStudy(study: Study, user: SessionUser, patch: Patch) {
  const next = {
    title: patch.title ?? study.title,
    question: patch.question === undefined ? study.question : patch.question,
    outcome: patch.outcome ?? study.outcome,
    transform: patch.transform ?? study.transform,
    denominator: patch.denominator === undefined ? study.denominator : patch.denominator,
    treated: patch.treated ?? study.treated,
    start: patch.start ?? study.start,
    interventions: patch.interventions ?? study.interventions,
    window: patch.window === undefined ? study.window : patch.window,
    covariates: patch.covariates ?? study.covariates,
  }
  const refined = z.any().superRefine((v, ctx) => refineStudy(v, ctx)).safeParse(next)
  if (!refined.success) {
    const issues = refined.error.issues.map(i => ({ path: i.path.join('.'), message: i.message }))
    badRequest(`Invalid study: ${issues[0]!.path}: ${issues[0]!.message}`, issues)
  }
  await checkReferences(next as Fields)
  return useDb().transaction(async (tx) => {
    await lockStudyForChange(tx, study.id)
    const [after] = await tx.update(studies).set({ ...next, ...(patch.status ? { status: patch.status } : {}), updatedAt: new Date() })
      .where(eq(studies.id, study.id)).returning()
    // a unit that is now treated cannot stay in its own comparison pool
    const ids = (await tx.select({ id: jurisdictions.id }).from(jurisdictions).where(inArray(jurisdictions.code, next.treated))).map(r => r.id)
    if (ids.length) await tx.delete(studyPoolDecisions).where(sql`${studyPoolDecisions.studyId} = ${study.id} and ${inArray(studyPoolDecisions.jurisdictionId, ids)}`)
    await audit(tx, { userId: user.id, action: 'update', entity: 'study', entityId: study.id, before: study, after })
    return after!
  })
}
