/**
 * Counterpart's database schema (Drizzle, PostgreSQL). Row types come from here
 * ($inferSelect / $inferInsert); migrations in db/migrations are generated from it
 * with `npm run db:generate` and reviewed before commit.
 */
import { sql } from 'drizzle-orm'
import {
  bigserial,
  boolean,
  customType,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  serial,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core'
import type { Spec } from '../shared/engine/spec'
import type { EstimateResult } from '../shared/engine/result'
import type { RunData, StudyIntervention, StudyStart, StudyWindow } from './jsonTypes'

const bytea = customType<{ data: Buffer; driverData: Buffer }>({
  dataType: () => 'bytea',
})

const createdAt = () => timestamp('created_at', { withTimezone: true }).notNull().defaultNow()

// ---------------------------------------------------------------- people

export const users = pgTable('users', {
  id: serial('id').primaryKey(),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  role: text('role', { enum: ['admin', 'analyst', 'reviewer'] }).notNull(),
  passwordHash: text('password_hash'),
  active: boolean('active').notNull().default(true),
  createdAt: createdAt(),
})

export const invitations = pgTable('invitations', {
  id: serial('id').primaryKey(),
  email: text('email').notNull(),
  name: text('name').notNull(),
  role: text('role', { enum: ['admin', 'analyst', 'reviewer'] }).notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  invitedBy: integer('invited_by').references(() => users.id),
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  acceptedAt: timestamp('accepted_at', { withTimezone: true }),
  createdAt: createdAt(),
})

/** Every sign-in attempt, kept to throttle guessing per account and per address. */
export const signInAttempts = pgTable('sign_in_attempts', {
  id: bigserial('id', { mode: 'number' }).primaryKey(),
  email: text('email').notNull(),
  ip: text('ip').notNull(),
  success: boolean('success').notNull(),
  at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
}, t => [
  index('sign_in_attempts_email_at').on(t.email, t.at),
  index('sign_in_attempts_ip_at').on(t.ip, t.at),
])

/** What the application sent by e-mail (the mail catcher holds what arrived). */
export const mailOutbox = pgTable('mail_outbox', {
  id: serial('id').primaryKey(),
  to: text('to').notNull(),
  subject: text('subject').notNull(),
  text: text('text').notNull(),
  sentAt: timestamp('sent_at', { withTimezone: true }),
  error: text('error'),
  createdAt: createdAt(),
})

// ---------------------------------------------------------------- registry

export const jurisdictions = pgTable('jurisdictions', {
  id: serial('id').primaryKey(),
  code: text('code').notNull().unique(),
  name: text('name').notNull(),
  kind: text('kind').notNull(),
  region: text('region'),
  attributes: jsonb('attributes').$type<Record<string, unknown>>().notNull().default({}),
  /** Set by an admin: hidden from pickers and from new studies' candidates; old studies keep it. */
  archivedAt: timestamp('archived_at', { withTimezone: true }),
  createdAt: createdAt(),
})

export const jurisdictionNeighbours = pgTable('jurisdiction_neighbours', {
  jurisdictionId: integer('jurisdiction_id').notNull().references(() => jurisdictions.id, { onDelete: 'cascade' }),
  neighbourId: integer('neighbour_id').notNull().references(() => jurisdictions.id, { onDelete: 'cascade' }),
}, t => [primaryKey({ columns: [t.jurisdictionId, t.neighbourId] })])

export const sources = pgTable('sources', {
  id: serial('id').primaryKey(),
  name: text('name').notNull(),
  publisher: text('publisher').notNull(),
  url: text('url'),
  licence: text('licence'),
  notes: text('notes'),
  createdBy: integer('created_by').references(() => users.id),
  /** Set by an admin: hidden from pickers; its releases and the studies that used them stay. */
  archivedAt: timestamp('archived_at', { withTimezone: true }),
  createdAt: createdAt(),
})

export const sourceReleases = pgTable('source_releases', {
  id: serial('id').primaryKey(),
  sourceId: integer('source_id').notNull().references(() => sources.id),
  label: text('label'),
  fileName: text('file_name').notNull(),
  checksum: text('checksum').notNull(),
  file: bytea('file'),
  sizeBytes: integer('size_bytes').notNull(),
  mapping: jsonb('mapping').$type<Record<string, unknown>>().notNull(),
  status: text('status', { enum: ['importing', 'done', 'failed'] }).notNull().default('importing'),
  rowCount: integer('row_count').notNull().default(0),
  errors: jsonb('errors').$type<unknown[]>(),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
  importedAt: timestamp('imported_at', { withTimezone: true }),
  /**
   * The measures the release has values for, set when its import is done (cached study data
   * of other measures then stays valid). Null only where an import could not say: such a
   * release counts as touching every measure.
   */
  measureIds: integer('measure_ids').array(),
}, t => [index('source_releases_source_checksum').on(t.sourceId, t.checksum)])

export const measures = pgTable('measures', {
  id: serial('id').primaryKey(),
  key: text('key').notNull().unique(),
  label: text('label').notNull(),
  unit: text('unit').notNull(),
  kind: text('kind', { enum: ['outcome', 'covariate', 'denominator'] }).notNull(),
  frequency: text('frequency', { enum: ['year', 'quarter', 'month', 'week', 'day'] }).notNull(),
  /** Set by an admin: hidden from pickers and refused for new studies; old studies keep it. */
  archivedAt: timestamp('archived_at', { withTimezone: true }),
  createdAt: createdAt(),
})

/**
 * One value of one measure for one jurisdiction and period, as published in one release.
 * Reads take the newest release per (measure, jurisdiction, period); older releases stay.
 *
 * No foreign keys on purpose: per-row key checks doubled the time of a bulk import
 * (1,000,000 rows: about 24 s with the three checks, 11 s without). The importer keeps the
 * references sound instead: it takes ids from the registry inside its transaction, locks
 * the release, measures and jurisdictions it uses once (FOR KEY SHARE), and deleting a
 * jurisdiction locks it and refuses while observations refer to it. Releases are never deleted.
 */
export const observations = pgTable('observations', {
  releaseId: integer('release_id').notNull(),
  measureId: integer('measure_id').notNull(),
  jurisdictionId: integer('jurisdiction_id').notNull(),
  period: text('period').notNull(),
  value: doublePrecision('value').notNull(),
}, t => [
  // one index only (each index costs an import about a second and a half per million rows): the
  // default panel read goes to panel_cells, reads of given releases start from the release id
  primaryKey({ columns: [t.releaseId, t.measureId, t.jurisdictionId, t.period] }),
])

/**
 * The current panel: for every (measure, jurisdiction, period) the value of the newest release
 * that has it. The importer keeps it up to date in the same transaction as the release's
 * observations, so the default panel read is one index range scan instead of picking the
 * newest of every release cell by cell. Reads of older releases still go to observations.
 * Stored with fillfactor 50 (migration 0005_panel_cells_fillfactor, custom SQL): a release
 * that republishes cells updates them on the same page, without new index entries.
 */
export const panelCells = pgTable('panel_cells', {
  measureId: integer('measure_id').notNull(),
  jurisdictionId: integer('jurisdiction_id').notNull(),
  period: text('period').notNull(),
  value: doublePrecision('value').notNull(),
  releaseId: integer('release_id').notNull(),
}, t => [primaryKey({ columns: [t.measureId, t.jurisdictionId, t.period] })])

export const policyEvents = pgTable('policy_events', {
  id: serial('id').primaryKey(),
  jurisdictionId: integer('jurisdiction_id').notNull().references(() => jurisdictions.id),
  period: text('period').notNull(),
  kind: text('kind', { enum: ['adoption', 'strengthening', 'repeal'] }).notNull(),
  policy: text('policy').notNull(),
  label: text('label').notNull(),
  notes: text('notes'),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
}, t => [index('policy_events_jurisdiction').on(t.jurisdictionId)])

// ---------------------------------------------------------------- studies

export const studies = pgTable('studies', {
  id: serial('id').primaryKey(),
  title: text('title').notNull(),
  question: text('question'),
  ownerId: integer('owner_id').notNull().references(() => users.id),
  status: text('status', { enum: ['draft', 'in_review', 'approved', 'archived'] }).notNull().default('draft'),
  outcome: text('outcome').notNull(),
  transform: text('transform', { enum: ['level', 'log', 'rate'] }).notNull().default('level'),
  denominator: text('denominator'),
  treated: jsonb('treated').$type<string[]>().notNull(),
  start: jsonb('start').$type<StudyStart>().notNull(),
  interventions: jsonb('interventions').$type<StudyIntervention[]>().notNull().default([]),
  window: jsonb('window').$type<StudyWindow | null>(),
  covariates: jsonb('covariates').$type<string[]>().notNull().default([]),
  reviewerId: integer('reviewer_id').references(() => users.id),
  parentId: integer('parent_id'),
  version: integer('version').notNull().default(1),
  lockedAt: timestamp('locked_at', { withTimezone: true }),
  createdAt: createdAt(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
})

export const studyPoolDecisions = pgTable('study_pool_decisions', {
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  jurisdictionId: integer('jurisdiction_id').notNull().references(() => jurisdictions.id),
  included: boolean('included').notNull(),
  reason: text('reason'),
  decidedBy: integer('decided_by').references(() => users.id),
  decidedAt: timestamp('decided_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [primaryKey({ columns: [t.studyId, t.jurisdictionId] })])

export const studyRuns = pgTable('study_runs', {
  id: serial('id').primaryKey(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  design: text('design').notNull(),
  /** The engine's spec as parsed when the run was made. */
  spec: jsonb('spec').$type<Spec>().notNull(),
  fingerprint: text('fingerprint').notNull(),
  releaseIds: jsonb('release_ids').$type<number[]>().notNull().default([]),
  /** What the rows were read from (measures, units, period range, transform) and the pool as decided then; {} on runs stored before migration 0001. */
  data: jsonb('data').$type<RunData>().notNull().default(sql`'{}'::jsonb`),
  result: jsonb('result').$type<EstimateResult>().notNull(),
  /** The placebo units' gap paths, kept out of the result (services/studies/gapPaths.ts); null when the run has none or predates migration 0014. */
  gapPaths: bytea('gap_paths'),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
}, t => [
  // a study's runs; the run of a design just before another is one step of this index
  index('study_runs_study').on(t.studyId, t.design, t.id),
])

/**
 * Robustness checks of a run (placebo in time and space, leave one donor out, alternative
 * pools): one row per check, run as a background job; the result is stored with the spec the
 * engine read and the fingerprint of the rows (services/studies/fingerprint.ts).
 */
export const robustnessRuns = pgTable('robustness_runs', {
  id: serial('id').primaryKey(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  /** The run whose design and data are checked. */
  runId: integer('run_id').references(() => studyRuns.id, { onDelete: 'set null' }),
  kind: text('kind', { enum: ['placebo_time', 'placebo_space', 'leave_one_out', 'pools'] }).notNull(),
  spec: jsonb('spec').$type<Record<string, unknown>>().notNull(),
  fingerprint: text('fingerprint'),
  status: text('status', { enum: ['queued', 'running', 'done', 'failed', 'cancelled'] }).notNull().default('queued'),
  progress: doublePrecision('progress').notNull().default(0),
  message: text('message'),
  result: jsonb('result').$type<Record<string, unknown>>(),
  jobId: uuid('job_id'),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [index('robustness_runs_study').on(t.studyId)])

export const validityNotes = pgTable('validity_notes', {
  id: serial('id').primaryKey(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  threat: text('threat').notNull(),
  assessment: text('assessment', { enum: ['addressed', 'partly', 'open'] }).notNull(),
  note: text('note').notNull().default(''),
  evidence: jsonb('evidence').$type<{ kind: string, ref: string, label?: string }[]>().notNull().default([]),
  updatedBy: integer('updated_by').references(() => users.id),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
}, t => [uniqueIndex('validity_notes_study_threat').on(t.studyId, t.threat)])

export const comments = pgTable('comments', {
  id: serial('id').primaryKey(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  authorId: integer('author_id').notNull().references(() => users.id),
  body: text('body').notNull(),
  createdAt: createdAt(),
})

// ---------------------------------------------------------------- operations

export const auditLog = pgTable('audit_log', {
  id: bigserial('id', { mode: 'number' }).primaryKey(),
  at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  userId: integer('user_id').references(() => users.id),
  action: text('action').notNull(),
  entity: text('entity').notNull(),
  entityId: text('entity_id'),
  before: jsonb('before'),
  after: jsonb('after'),
}, t => [index('audit_log_entity').on(t.entity, t.entityId), index('audit_log_at').on(t.at)])

/** Our view of a background job (pg-boss runs it); the worker writes progress, heartbeat and outcome here. */
export const jobs = pgTable('jobs', {
  id: uuid('id').primaryKey().default(sql`gen_random_uuid()`),
  kind: text('kind').notNull(),
  state: text('state', { enum: ['queued', 'running', 'done', 'failed', 'cancelled'] }).notNull().default('queued'),
  progress: doublePrecision('progress').notNull().default(0),
  message: text('message'),
  result: jsonb('result'),
  /** Which process runs it ("host:pid role"), set when a worker claims it. */
  runner: text('runner'),
  /** Set by a cancel; the running job stops at its next progress report. */
  cancelRequestedAt: timestamp('cancel_requested_at', { withTimezone: true }),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
})

export type User = typeof users.$inferSelect
export type Study = typeof studies.$inferSelect
export type StudyRun = typeof studyRuns.$inferSelect
export type Role = User['role']
export const ROLES = ['admin', 'analyst', 'reviewer'] as const satisfies readonly Role[]
