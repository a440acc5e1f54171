/**
 * The demo scenario: the invented country of Veldmark, 60 fictional municipalities in six
 * regions, monthly data 2012-01 to 2024-12, and a housing policy with a KNOWN TRUE EFFECT,
 * so the demo doubles as a recovery check for the estimators. Every name is made up.
 *
 * Outcome: eviction filings per 1,000 renter households (a rate the import derives from the
 * count `eviction_filings` and the denominator `renter_households`), with covariates
 * `unemployment_rate` (%) and `median_rent` (crowns a month).
 *
 * Data-generating process for the rate of municipality i in month t (per 1,000 households):
 *   rate = BASE_i + REGION_TREND_r * years + SEASON[month] + UNEMPLOYMENT_EFFECT * unemployment
 *          + effects + AR(1) noise (rho NOISE_RHO, sd NOISE_SD)
 * effects (constant level shifts from the month given, no anticipation, no spillover):
 *   TRUE_EFFECT.adoption      in every adopter from its adoption month,
 *   TRUE_EFFECT.strengthening in the first adopter from STRENGTHENED,
 *   RELATED_EFFECT            in RELATED_ADOPTER from RELATED_START (another policy: a donor to exclude),
 *   SHOCK.size                in SHOCK.code in SHOCK.period only (a one-off data shock).
 * The count is round(rate x households / 1000), so the stored rate carries a little rounding noise.
 *
 * Generated from a fixed seed (SEED): the same numbers on every machine. Inserted as one
 * release of the source "Demo statistical office" through the upload bulk path.
 */
import type pg from 'pg'
import { importRelease } from '../../server/services/uploads/importRelease'
import { checksumOf } from '../../server/services/uploads/checksum'

export const SEED = 20120101
export const FIRST_PERIOD = '2012-01'
export const LAST_PERIOD = '2024-12'
export const POLICY = 'mediation_first'
export const POLICY_LABEL = 'Mediation before an eviction filing'
export const OUTCOME = 'eviction_filing_rate'

/** The effect on filings per 1,000 renter households, per month, once in force. */
export const TRUE_EFFECT = { adoption: -0.8, strengthening: -0.4 } as const

export const FIRST_ADOPTER = 'VM-BR-04'
export const ADOPTED = '2017-07'
export const STRENGTHENED = '2020-01'
export const LATER_ADOPTERS = [
  { code: 'VM-HO-07', period: '2019-04' },
  { code: 'VM-SA-02', period: '2021-01' },
  { code: 'VM-KE-09', period: '2022-10' },
] as const
export const RELATED_POLICY = 'rent_registry'
export const RELATED_ADOPTER = 'VM-OR-05'
export const RELATED_START = '2016-01'
export const RELATED_EFFECT = -0.3
export const SHOCK = { code: 'VM-LU-03', period: '2018-03', size: 3 } as const
export const UNEMPLOYMENT_EFFECT = 0.15
export const NOISE_SD = 0.25
export const NOISE_RHO = 0.3
export const SEASON = [0.55, 0.35, 0.2, 0.05, -0.1, -0.25, -0.3, -0.2, 0.05, 0.15, 0.0, -0.5] as const

export const SOURCE_NAME = 'Demo statistical office'

export const REGIONS = [
  { key: 'BR', name: 'Brannvale', trend: -0.04 },
  { key: 'HO', name: 'Holmquist Coast', trend: 0.02 },
  { key: 'SA', name: 'Saltreach', trend: -0.01 },
  { key: 'KE', name: 'Kestrelmoor', trend: 0.03 },
  { key: 'OR', name: 'Orvandel', trend: -0.02 },
  { key: 'LU', name: 'Lumeth Uplands', trend: 0.0 },
] as const

const FIRST = ['Quill', 'Brisk', 'Cael', 'Dremm', 'Ebber', 'Fenlow', 'Gryn', 'Hesk', 'Yvesk', 'Zorv']
const SECOND = ['mere', 'holt', 'wick', 'stad', 'ford', 'by', 'vale', 'dal', 'thorpe', 'sund']

export const MEASURES = [
  { key: 'eviction_filings', label: 'Eviction filings', unit: 'filings a month', kind: 'outcome', frequency: 'month' },
  { key: 'renter_households', label: 'Renter households', unit: 'households', kind: 'denominator', frequency: 'month' },
  { key: 'unemployment_rate', label: 'Unemployment rate', unit: '% of the labour force', kind: 'covariate', frequency: 'month' },
  { key: 'median_rent', label: 'Median rent', unit: 'crowns a month', kind: 'covariate', frequency: 'month' },
] as const

/** mulberry32: a small seeded generator, uniform on [0, 1). */
function generator(seed: number) {
  let a = seed >>> 0
  const uniform = () => {
    a = (a + 0x6D2B79F5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  const normal = () => Math.sqrt(-2 * Math.log(1 - uniform())) * Math.cos(2 * Math.PI * uniform())
  return { uniform, normal }
}

export interface DemoJurisdiction { code: string, name: string, region: string, x: number, y: number, attributes: Record<string, number | string> }
export interface DemoRow { code: string, period: string, filings: number, households: number, unemployment: number, rent: number, rate: number, trueRate: number }

export function months(): string[] {
  const out: string[] = []
  for (let y = 2012; y <= 2024; y++) for (let m = 1; m <= 12; m++) out.push(`${y}-${String(m).padStart(2, '0')}`)
  return out
}

/** The 60 municipalities on a 12 x 5 grid, each region a 2 x 5 block; neighbours share an edge. */
export function demoJurisdictions(): DemoJurisdiction[] {
  const rng = generator(SEED)
  const out: DemoJurisdiction[] = []
  REGIONS.forEach((region, r) => {
    for (let k = 0; k < 10; k++) {
      const n = r * 10 + k
      const name = `${FIRST[n % 10]}${SECOND[(Math.floor(n / 10) + 3 * (n % 10)) % 10]}`
      out.push({
        code: `VM-${region.key}-${String(k + 1).padStart(2, '0')}`,
        name,
        region: region.name,
        x: r * 2 + (k % 2),
        y: Math.floor(k / 2),
        attributes: { area_km2: Math.round(40 + rng.uniform() * 900), urban: rng.uniform() < 0.3 ? 'yes' : 'no' },
      })
    }
  })
  return out
}

export function demoNeighbours(units = demoJurisdictions()): [string, string][] {
  const pairs: [string, string][] = []
  for (const a of units) for (const b of units) {
    if (a.code < b.code && Math.abs(a.x - b.x) + Math.abs(a.y - b.y) === 1) pairs.push([a.code, b.code])
  }
  return pairs
}

export function demoPolicyEvents() {
  return [
    { jurisdiction: FIRST_ADOPTER, period: ADOPTED, kind: 'adoption', policy: POLICY, label: POLICY_LABEL, notes: 'Landlords must offer a mediation session before filing.' },
    { jurisdiction: FIRST_ADOPTER, period: STRENGTHENED, kind: 'strengthening', policy: POLICY, label: 'Mediation extended to arrears under three months', notes: 'Publicly funded mediators; notice period from 14 to 30 days.' },
    ...LATER_ADOPTERS.map(a => ({ jurisdiction: a.code, period: a.period, kind: 'adoption', policy: POLICY, label: POLICY_LABEL, notes: null })),
    { jurisdiction: RELATED_ADOPTER, period: RELATED_START, kind: 'adoption', policy: RELATED_POLICY, label: 'Public register of rents', notes: 'A related housing policy: exclude from comparison pools.' },
  ] as const
}

/** Every municipality-month with the true and the published rate. Deterministic. */
export function demoRows(): DemoRow[] {
  const rng = generator(SEED + 1)
  const units = demoJurisdictions()
  const periods = months()
  const adoption = new Map<string, string>([[FIRST_ADOPTER, ADOPTED], ...LATER_ADOPTERS.map(a => [a.code, a.period] as [string, string])])
  const rows: DemoRow[] = []
  for (const unit of units) {
    const region = REGIONS.find(r => r.name === unit.region)!
    const base = 2.5 + rng.uniform() * 3.5
    const households0 = 5000 + Math.round(rng.uniform() * 55000)
    const growth = 0.004 + rng.uniform() * 0.012
    const unemploymentBase = 4 + rng.uniform() * 5
    const rent0 = 650 + rng.uniform() * 500
    let noise = 0
    periods.forEach((period, t) => {
      const years = t / 12
      const month = t % 12
      const cycle = 1.2 * Math.sin((2 * Math.PI * (t - 30)) / 96)
      const unemployment = Math.max(1, unemploymentBase + cycle + 0.3 * rng.normal())
      noise = NOISE_RHO * noise + NOISE_SD * Math.sqrt(1 - NOISE_RHO * NOISE_RHO) * rng.normal()
      let effect = 0
      const adopted = adoption.get(unit.code)
      if (adopted && period >= adopted) effect += TRUE_EFFECT.adoption
      if (unit.code === FIRST_ADOPTER && period >= STRENGTHENED) effect += TRUE_EFFECT.strengthening
      if (unit.code === RELATED_ADOPTER && period >= RELATED_START) effect += RELATED_EFFECT
      if (unit.code === SHOCK.code && period === SHOCK.period) effect += SHOCK.size
      const trueRate = Math.max(0.2, base + region.trend * years + SEASON[month]! + UNEMPLOYMENT_EFFECT * unemployment + effect + noise)
      const households = Math.round(households0 * (1 + growth) ** years * (1 + 0.002 * rng.normal()))
      const filings = Math.round((trueRate * households) / 1000)
      rows.push({
        code: unit.code,
        period,
        filings,
        households,
        unemployment: Math.round(unemployment * 10) / 10,
        rent: Math.round(rent0 * (1.025 ** years) + 8 * rng.normal()),
        rate: (filings / households) * 1000,
        trueRate,
      })
    })
  }
  return rows
}

export function demoCsv(rows = demoRows()): string {
  const lines = ['municipality,month,eviction_filings,renter_households,unemployment_rate,median_rent']
  for (const r of rows) lines.push(`${r.code},${r.period},${r.filings},${r.households},${r.unemployment},${r.rent}`)
  return `${lines.join('\n')}\n`
}

export const DEMO_MAPPING = {
  layout: 'long',
  jurisdiction: 'municipality',
  period: 'month',
  values: { eviction_filings: 'eviction_filings', renter_households: 'renter_households', unemployment_rate: 'unemployment_rate', median_rent: 'median_rent' },
  delimiter: 'auto',
  missing: [],
  rates: [{ key: OUTCOME, count: 'eviction_filings', denominator: 'renter_households', per: 1000, label: 'Eviction filings per 1,000 renter households' }],
} as const

/** Seeds the scenario once: registry rows are upserted, the release is imported only if missing. */
export async function seedDemoScenario(pool: pg.Pool): Promise<{ imported: boolean }> {
  const units = demoJurisdictions()
  for (const u of units) {
    await pool.query(
      `INSERT INTO jurisdictions (code, name, kind, region, attributes) VALUES ($1, $2, 'municipality', $3, $4) ON CONFLICT (code) DO NOTHING`,
      [u.code, u.name, u.region, JSON.stringify({ ...u.attributes, country: 'Veldmark (fictional)' })])
  }
  for (const [a, b] of demoNeighbours(units)) {
    await pool.query(
      `INSERT INTO jurisdiction_neighbours (jurisdiction_id, neighbour_id)
       SELECT x.id, y.id FROM jurisdictions x, jurisdictions y WHERE (x.code, y.code) IN (($1, $2), ($2, $1))
       ON CONFLICT DO NOTHING`, [a, b])
  }
  for (const m of MEASURES) {
    await pool.query(`INSERT INTO measures (key, label, unit, kind, frequency) VALUES ($1, $2, $3, $4, $5) ON CONFLICT (key) DO NOTHING`,
      [m.key, m.label, m.unit, m.kind, m.frequency])
  }
  for (const e of demoPolicyEvents()) {
    await pool.query(
      `INSERT INTO policy_events (jurisdiction_id, period, kind, policy, label, notes)
       SELECT j.id, $2, $3, $4, $5, $6 FROM jurisdictions j WHERE j.code = $1
         AND NOT EXISTS (SELECT 1 FROM policy_events p WHERE p.jurisdiction_id = j.id AND p.period = $2 AND p.kind = $3 AND p.policy = $4)`,
      [e.jurisdiction, e.period, e.kind, e.policy, e.label, e.notes])
  }
  let { rows: [source] } = await pool.query<{ id: number }>('SELECT id FROM sources WHERE name = $1', [SOURCE_NAME])
  if (!source) {
    ({ rows: [source] } = await pool.query<{ id: number }>(
      `INSERT INTO sources (name, publisher, url, licence, notes) VALUES ($1, $2, NULL, $3, $4) RETURNING id`,
      [SOURCE_NAME, 'Veldmark Office of Statistics (fictional)', 'Demo data, free to use',
        'Invented data for the demo: 60 fictional municipalities, monthly 2012-2024. The true policy effect is known (db/seed/demoScenario.ts).']))
  }
  const file = Buffer.from(demoCsv())
  const checksum = checksumOf(file)
  const { rows: [existing] } = await pool.query(`SELECT id FROM source_releases WHERE source_id = $1 AND checksum = $2 AND status = 'done'`, [source!.id, checksum])
  if (existing) return { imported: false }
  const { rows: [release] } = await pool.query<{ id: number }>(
    `INSERT INTO source_releases (source_id, label, file_name, checksum, file, size_bytes, mapping, status)
     VALUES ($1, 'Demo edition', 'veldmark-municipalities-2012-2024.csv', $2, $3, $4, $5, 'importing') RETURNING id`,
    [source!.id, checksum, file, file.length, JSON.stringify(DEMO_MAPPING)])
  await importRelease(pool, release!.id)
  return { imported: true }
}
