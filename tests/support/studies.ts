/**
 * Reads a run's rows back straight from the database, independently of the server's code:
 * for each measure the run names, the newest value per cell among the run's releases, for
 * the run's units and period range, merged as the engine reads them ("outcome" plus one key
 * per covariate; a rate is outcome / denominator x 1,000).
 */
import { sql } from './db'

export interface Row { jurisdiction: string, period: string, values: Record<string, number | null> }

export async function readRowsBack(runId: number): Promise<Row[]> {
  const [run] = await sql('SELECT data, release_ids FROM study_runs WHERE id = $1', [runId])
  const src = run.data.source as { outcome: string, covariates: string[], denominator: string | null, transform: string, units: string[], from: string | null, to: string | null }
  const read = async (measure: string) => {
    const rows = await sql<{ code: string, period: string, value: number }>(`
      SELECT DISTINCT ON (o.jurisdiction_id, o.period) j.code, o.period, o.value
      FROM observations o JOIN measures m ON m.id = o.measure_id JOIN jurisdictions j ON j.id = o.jurisdiction_id
      WHERE m.key = $1 AND o.release_id = ANY($2::int[]) AND j.code = ANY($3::text[])
        AND ($4::text IS NULL OR o.period >= $4) AND ($5::text IS NULL OR o.period <= $5)
      ORDER BY o.jurisdiction_id, o.period, o.release_id DESC`, [measure, run.release_ids, src.units, src.from, src.to])
    return new Map(rows.map(r => [`${r.code}|${r.period}`, r.value]))
  }
  const outcome = await read(src.outcome)
  const covariates = await Promise.all(src.covariates.map(read))
  const den = src.transform === 'rate' && src.denominator ? await read(src.denominator) : null
  const out: Row[] = []
  for (const [key, value] of outcome) {
    const [jurisdiction, period] = key.split('|') as [string, string]
    const d = den?.get(key)
    const values: Record<string, number | null> = { outcome: den ? (d !== undefined && d > 0 ? (value / d) * 1000 : null) : value }
    src.covariates.forEach((c, i) => (values[c] = covariates[i]!.get(key) ?? null))
    out.push({ jurisdiction, period, values })
  }
  return out
}
