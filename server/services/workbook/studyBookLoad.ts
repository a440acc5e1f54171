/**
 * Gathers what the study workbook shows: the study, every stored run (newest first) with who
 * ran it, the pool as decided now (scores, flags, decisions and reasons, as on the Pool step)
 * and the validity record.
 */
import { desc, eq, inArray } from 'drizzle-orm'
import { measures, studyRuns, users, validityNotes, type Study } from '~~/db/schema'
import pkg from '~~/package.json'
import type { SessionUser } from '../../utils/auth'
import { assemblePool, candidateContext, poolDecisions } from '../studies/candidates'
import { approvalOf } from './load'
import { buildStudyBook, type StudyBookInput, studyBookFileName } from './studyBook'

/** The pool as the Pool step shows it now; a study whose candidates cannot be scored (no data yet) has an empty pool sheet. */
async function currentPool(study: Study): Promise<StudyBookInput['pool']> {
  try {
    const ctx = await candidateContext(study)
    const { rows } = assemblePool(ctx, await poolDecisions(study.id))
    return rows.map(p => ({
      jurisdiction: p.jurisdiction, included: p.included, reason: p.decided ? p.reason : p.suggested ? `suggested: ${p.suggestedReason ?? 'in the suggested pool'}` : 'not in the suggested pool', rank: p.rank,
      rmspe: p.rmspe, rmspeDemeaned: p.rmspeDemeaned, correlation: p.correlation, slopeDiff: p.slopeDiff, covariateDistance: p.covariateDistance,
      missingShare: p.missingShare, exclusions: p.exclusions,
    }))
  }
  catch (e) {
    if ((e as { statusCode?: number }).statusCode === 400) return []
    throw e
  }
}

export async function studyBookInput(study: Study, user: SessionUser): Promise<StudyBookInput> {
  const db = useDb()
  const [runs, notes, outcome, approval, pool] = await Promise.all([
    db.select({ run: studyRuns, name: users.name, email: users.email }).from(studyRuns).leftJoin(users, eq(users.id, studyRuns.createdBy))
      .where(eq(studyRuns.studyId, study.id)).orderBy(desc(studyRuns.id)),
    db.select().from(validityNotes).where(eq(validityNotes.studyId, study.id)),
    db.select({ label: measures.label }).from(measures).where(inArray(measures.key, [study.outcome])),
    study.status === 'approved' ? approvalOf(study.id) : Promise.resolve(null),
    currentPool(study),
  ])
  return {
    study: {
      id: study.id, title: study.title, question: study.question, outcome: study.outcome, outcomeLabel: outcome[0]?.label ?? null,
      transform: study.transform, treated: study.treated, start: study.start, window: study.window ?? null, covariates: study.covariates,
      status: study.status, version: study.version, interventions: study.interventions, approval,
    },
    runs: runs.map(({ run, name, email }) => ({
      id: run.id, design: run.design, spec: run.spec, fingerprint: run.fingerprint, result: run.result,
      createdAt: run.createdAt, createdBy: name ? `${name} (${email})` : null,
    })),
    pool,
    validity: notes.map(n => ({ threat: n.threat, assessment: n.assessment, note: n.note, evidence: n.evidence })),
    software: { name: 'Counterpart', version: pkg.version },
    generated: { at: new Date(), by: `${user.name} (${user.email})` },
  }
}

export async function studyWorkbook(study: Study, user: SessionUser) {
  const input = await studyBookInput(study, user)
  return { buffer: await buildStudyBook(input), fileName: studyBookFileName(study.title, study.version), runs: input.runs.length }
}
