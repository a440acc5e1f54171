/**
 * The estimation spec: what a study stores, what `POST /api/studies/:id/runs` receives and
 * what the command line reads from `--spec FILE.json`. Validated with zod; unknown keys are
 * rejected with a message naming them. Free of node-only imports (used in the browser too).
 *
 * Defaults (DESIGN.md, "Computation: the engine"): unit/period/outcome column names "unit",
 * "period", "outcome"; transform "level"; fixedEffects "two-way"; cluster "unit";
 * smallSample "nested"; did.form "twfe"; eventWindow.reference -1 and bin true;
 * its.seasonality "none".
 */
import { z } from 'zod'

/** A period as written in the data: text ("1979-Q2") or a whole number (1988). */
export const periodValue = z.union([z.string().min(1), z.number().int()])

const periodPair = z.tuple([periodValue, periodValue])

export const designs = ['pre_post', 'its', 'did', 'event_study', 'staggered', 'synthetic'] as const
/** Designs whose computation exists today; the others are refused with a clear message. */
export const availableDesigns = ['pre_post', 'its', 'did', 'event_study', 'synthetic', 'staggered'] as const
export const inferenceMethods = ['auto', 'analytic', 'permutation', 'wild_bootstrap'] as const
/** Above this many draws a run is refused: 100,000 already puts a p-value's Monte Carlo error near 0.001. */
export const MAX_DRAWS = 100_000
export const smallSampleChoices = ['nested', 'full', 'slopes', 'clusters', 'none'] as const

/** zod option: unknown keys give `unknown key "foo"` (the issue path says where). */
const unknownKeys = {
  error: (issue: { code?: string; keys?: string[] }) =>
    issue.code === 'unrecognized_keys' ? `unknown key${issue.keys!.length > 1 ? 's' : ''} ${issue.keys!.map((k) => `"${k}"`).join(', ')}` : undefined,
}

export const eventWindowSchema = z.strictObject(
  {
    from: z.number().int(),
    to: z.number().int(),
    reference: z.number().int().default(-1),
    bin: z.boolean().default(true),
  },
  unknownKeys,
)

export const itsOptionsSchema = z.strictObject(
  {
    breaks: z.array(periodValue).min(1).optional(),
    seasonality: z.enum(['none', 'month', 'quarter']).default('none'),
    seasonColumn: z.string().min(1).optional(),
    hacLag: z.number().int().min(0).optional(),
    /** Model the treated-minus-comparison series (comparative ITS): the comparison mean or the synthetic series. */
    comparison: z.enum(['none', 'mean', 'synthetic']).default('none'),
    family: z.enum(['gaussian', 'poisson', 'quasipoisson']).default('gaussian'),
    /** Column whose log is the offset of a count model (population, distance driven, days). */
    exposure: z.string().min(1).optional(),
    errors: z.enum(['newey_west', 'ar1_ml', 'ar1_reml', 'prais_winsten']).default('newey_west'),
  },
  unknownKeys,
)

/** How the headline p-value and interval are computed (DESIGN.md, "Inference"). */
export const inferenceSchema = z.strictObject(
  {
    method: z.enum(inferenceMethods).default('auto'),
    level: z.number().gt(0.5, 'level is a coverage such as 0.95 (above 0.5)').lt(1, 'level is a coverage such as 0.95 (below 1)').default(0.95),
    draws: z.number().int().min(99, 'draws: at least 99').max(MAX_DRAWS, `draws: at most ${MAX_DRAWS.toLocaleString('en')}; more only adds time (the Monte Carlo error at 100,000 draws is about 0.001)`).default(9999),
    weights: z.enum(['rademacher', 'webb']).optional(),
    seed: z.number().int().min(1, 'seed: a whole number from 1').max(2 ** 32 - 1).default(1),
  },
  unknownKeys,
)
export type InferenceSpec = z.output<typeof inferenceSchema>

export const specSchema = z
  .strictObject(
    {
      design: z.enum(designs),
      unit: z.string().min(1).default('unit'),
      period: z.string().min(1).default('period'),
      outcome: z.string().min(1).default('outcome'),
      treated: z.array(z.string().min(1)).default([]),
      start: z.union([periodValue, z.record(z.string(), periodValue)]).optional(),
      treatmentColumn: z.string().min(1).optional(),
      comparison: z.array(z.string().min(1)).optional(),
      covariates: z.array(z.string().min(1)).default([]),
      transform: z.enum(['level', 'log']).default('level'),
      fixedEffects: z.enum(['two-way', 'unit']).default('two-way'),
      cluster: z.enum(['unit', 'none']).default('unit'),
      smallSample: z.enum(smallSampleChoices).default('nested'),
      window: z.strictObject({ pre: periodPair, post: periodPair }, unknownKeys).optional(),
      eventWindow: eventWindowSchema.optional(),
      did: z
        .strictObject(
          {
            form: z.enum(['twfe', '2x2']).default('twfe'),
            /** Later interventions: the treated period is split at each into phase_1, phase_2, ... */
            phases: z.array(periodValue).min(1).max(20).optional(),
          },
          unknownKeys,
        )
        .default({ form: 'twfe' }),
      its: itsOptionsSchema.optional(),
      /** Column holding the cluster id when clusters are groups of units (regions). */
      clusterColumn: z.string().min(1).optional(),
      inference: inferenceSchema.default({ method: 'auto', level: 0.95, draws: 9999, seed: 1 }),
      synthetic: z.strictObject({ covariates: z.array(z.string().min(1)).default([]) }, unknownKeys).optional(),
      staggered: z.strictObject({ comparison: z.enum(['never', 'not_yet']).default('never') }, unknownKeys).optional(),
    },
    unknownKeys,
  )
  .superRefine((spec, ctx) => {
    if (spec.eventWindow && spec.eventWindow.from > spec.eventWindow.to) {
      ctx.addIssue({ code: 'custom', path: ['eventWindow'], message: `from (${spec.eventWindow.from}) is after to (${spec.eventWindow.to})` })
    }
    if (spec.eventWindow && (spec.eventWindow.reference < spec.eventWindow.from || spec.eventWindow.reference > spec.eventWindow.to)) {
      ctx.addIssue({ code: 'custom', path: ['eventWindow', 'reference'], message: `reference ${spec.eventWindow.reference} lies outside ${spec.eventWindow.from}..${spec.eventWindow.to}` })
    }
    const dup = spec.treated.find((u, i) => spec.treated.indexOf(u) !== i)
    if (dup !== undefined) ctx.addIssue({ code: 'custom', path: ['treated'], message: `unit "${dup}" is listed twice` })
    if (spec.clusterColumn && spec.cluster === 'none') {
      ctx.addIssue({ code: 'custom', path: ['clusterColumn'], message: 'clusterColumn names the clusters, but cluster is "none"; drop one of them' })
    }
    const breaks = spec.its?.breaks ?? []
    const dupBreak = breaks.find((b, i) => breaks.findIndex((c) => String(c) === String(b)) !== i)
    if (dupBreak !== undefined) ctx.addIssue({ code: 'custom', path: ['its', 'breaks'], message: `break ${dupBreak} is listed twice` })
    const phases = spec.did.phases ?? []
    const dupPhase = phases.find((b, i) => phases.findIndex((c) => String(c) === String(b)) !== i)
    if (dupPhase !== undefined) ctx.addIssue({ code: 'custom', path: ['did', 'phases'], message: `phase start ${dupPhase} is listed twice` })
    const both = spec.comparison?.find((u) => spec.treated.includes(u))
    if (both !== undefined) ctx.addIssue({ code: 'custom', path: ['comparison'], message: `unit "${both}" is both treated and comparison` })
  })

/** The spec as written by a caller (defaults optional). */
export type SpecInput = z.input<typeof specSchema>
/** The spec after validation, with every default filled in. */
export type Spec = z.output<typeof specSchema>
export type Design = Spec['design']
export type SmallSample = Spec['smallSample']
export type PeriodValue = z.infer<typeof periodValue>

/** One readable line per problem: `spec.did.form: Invalid option: expected one of "twfe"|"2x2"`. */
export function describeSpecIssues(error: z.ZodError): string[] {
  return error.issues.map((issue) => {
    const where = issue.path.length ? `spec.${issue.path.join('.')}` : 'spec'
    return `${where}: ${issue.message}`
  })
}

export type SpecParse = { ok: true; spec: Spec } | { ok: false; issues: string[] }

/** Validates without throwing (for server routes that answer 400 with data.issues). */
export function safeParseSpec(input: unknown): SpecParse {
  const parsed = specSchema.safeParse(input)
  return parsed.success ? { ok: true, spec: parsed.data } : { ok: false, issues: describeSpecIssues(parsed.error) }
}
