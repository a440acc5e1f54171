/**
 * Gathers what the estimates workbook of one run shows: the run and its exact rows (read
 * again from the releases it used and checked against its fingerprint), the pool as it
 * stood, the study's validity record, the releases with their checksums, who ran it.
 */
import { and, desc, eq, inArray } from 'drizzle-orm'
import { auditLog, measures, sourceReleases, sources, users, validityNotes } from '~~/db/schema'
import pkg from '~~/package.json'
import type { SessionUser } from '../../utils/auth'
import { loadRunRows } from '../studies/runData'
import { OUTCOME } from '../studies/rows'
import { robustnessForRun } from '../robustness/forRun'
import { buildWorkbook, type WorkbookInput, workbookFileName } from './build'
import { evidenceForWorkbook } from '../validity/evidence'

export async function workbookInput(studyId: number, runId: number, user: SessionUser): Promise<WorkbookInput> {
  const { run, study, rows, pool } = await loadRunRows(studyId, runId)
  const db = useDb()
  const keys = [study.outcome, ...study.covariates]
  const [measureRows, notes, releases, creator, approval] = await Promise.all([
    db.select({ key: measures.key, label: measures.label, unit: measures.unit }).from(measures).where(inArray(measures.key, keys)),
    db.select().from(validityNotes).where(eq(validityNotes.studyId, studyId)),
    run.releaseIds.length
      ? db.select({
          id: sourceReleases.id, source: sources.name, publisher: sources.publisher, url: sources.url, licence: sources.licence,
          label: sourceReleases.label, fileName: sourceReleases.fileName, checksum: sourceReleases.checksum, rowCount: sourceReleases.rowCount, importedAt: sourceReleases.importedAt,
        }).from(sourceReleases).innerJoin(sources, eq(sources.id, sourceReleases.sourceId)).where(inArray(sourceReleases.id, run.releaseIds)).orderBy(sourceReleases.id)
      : Promise.resolve([]),
    run.createdBy ? db.select({ name: users.name, email: users.email }).from(users).where(eq(users.id, run.createdBy)) : Promise.resolve([]),
    study.status === 'approved' ? approvalOf(studyId) : Promise.resolve(null),
  ])
  const threatEvidence = await evidenceForWorkbook(study)
  const label = new Map(measureRows.map(m => [m.key, `${m.label} (${m.key}, ${m.unit})`]))
  const valueKeys = [...new Set(rows.flatMap(r => Object.keys(r.values)))]
  const outcomeHeader = `${label.get(study.outcome) ?? study.outcome}${study.transform === 'rate' && study.denominator ? ` per 1,000 ${study.denominator}` : ''}`
  return {
    study: {
      id: study.id, title: study.title, question: study.question, outcome: study.outcome, outcomeLabel: measureRows.find(m => m.key === study.outcome)?.label ?? null,
      transform: study.transform, treated: study.treated, start: study.start, window: study.window ?? null, covariates: study.covariates, status: study.status, version: study.version,
      interventions: study.interventions, approval,
    },
    run: {
      id: run.id, design: run.design, spec: run.spec, fingerprint: run.fingerprint, result: run.result,
      createdAt: run.createdAt, createdBy: creator[0] ? `${creator[0].name} (${creator[0].email})` : null,
    },
    pool: pool.map(p => ({
      jurisdiction: p.jurisdiction, included: p.included, reason: p.reason, rank: p.rank, rmspe: p.rmspe, rmspeDemeaned: p.rmspeDemeaned,
      correlation: p.correlation, slopeDiff: p.slopeDiff, covariateDistance: p.covariateDistance, missingShare: p.missingShare, exclusions: p.exclusions,
    })),
    rows: rows.map(r => ({ unit: r.jurisdiction, period: r.period, values: r.values })),
    panelColumns: valueKeys.map(key => ({ key, header: key === OUTCOME ? outcomeHeader : label.get(key) ?? key })),
    validity: notes.map(n => ({ threat: n.threat, assessment: n.assessment, note: n.note, evidence: n.evidence })),
    robustness: await robustnessForRun(run.id),
    threatEvidence,
    releases,
    software: { name: 'Counterpart', version: pkg.version },
    generated: { at: new Date(), by: `${user.name} (${user.email})` },
  }
}

/** The reviewer and moment of a study's approval, from the audit log. */
export async function approvalOf(studyId: number): Promise<{ by: string, at: Date } | null> {
  const [row] = await useDb().select({ at: auditLog.at, name: users.name, email: users.email }).from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.userId))
    .where(and(eq(auditLog.entity, 'study'), eq(auditLog.entityId, String(studyId)), eq(auditLog.action, 'review.approve')))
    .orderBy(desc(auditLog.id)).limit(1)
  return row ? { by: row.name ? `${row.name} (${row.email})` : 'unknown', at: row.at } : null
}

export async function runWorkbook(studyId: number, runId: number, user: SessionUser) {
  const input = await workbookInput(studyId, runId, user)
  return { buffer: await buildWorkbook(input), fileName: workbookFileName(input.study.title, input.study.version, runId) }
}
