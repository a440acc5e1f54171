/**
 * A new study may not be built on archived registry entries: its outcome, covariate and
 * denominator measures and its treated jurisdictions must be current (400 naming each archived
 * one). Studies made before the archiving keep theirs.
 */
import { and, inArray, isNotNull } from 'drizzle-orm'
import { jurisdictions, measures } from '~~/db/schema'

export async function refuseArchived(s: { outcome: string, covariates: string[], denominator?: string | null, treated: string[] }) {
  const db = useDb()
  const keys = [s.outcome, ...s.covariates, ...(s.denominator ? [s.denominator] : [])]
  const [m, j] = await Promise.all([
    db.select({ key: measures.key }).from(measures).where(and(inArray(measures.key, keys), isNotNull(measures.archivedAt))),
    db.select({ code: jurisdictions.code }).from(jurisdictions).where(and(inArray(jurisdictions.code, s.treated.length ? s.treated : ['']), isNotNull(jurisdictions.archivedAt))),
  ])
  const named = [...m.map(r => `measure "${r.key}"`), ...j.map(r => `jurisdiction "${r.code}"`)]
  if (named.length) {
    badRequest(`Archived, so not available to new studies: ${named.join(', ')}. An administrator can bring ${named.length > 1 ? 'them' : 'it'} back on the registry page.`,
      [...m.map(r => ({ path: r.key === s.outcome ? 'outcome' : r.key === s.denominator ? 'denominator' : 'covariates', message: `"${r.key}" is archived.` })), ...j.map(r => ({ path: 'treated', message: `"${r.code}" is archived.` }))])
  }
}
