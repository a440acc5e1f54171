// The command line (cli/counterpart.ts) run as a separate process from its prebuilt bundle
// (cli/bundle.mjs, built here when stale), as `npm run cli` runs it: result JSON on stdout and
// status 0 when all is well; status 2, a message on stderr and nothing on stdout for bad input.
import { spawn } from 'node:child_process'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { beforeAll, describe, expect, it } from 'vitest'
import { bundlePath, ensureCliBundle } from '../../cli/bundle.mjs'
import { referenceDir, repoRoot } from './helpers'

const dir = mkdtempSync(path.join(tmpdir(), 'counterpart-cli-'))
const fatalities = path.join(referenceDir, 'a1_fatalities_twfe_beertax/panel.csv')
const synthetic = path.join(referenceDir, 'a4_synthetic_donors/panel.csv')

function file(name: string, content: string): string {
  const p = path.join(dir, name)
  writeFileSync(p, content)
  return p
}

function run(...args: string[]): Promise<{ status: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [bundlePath, ...args], { cwd: repoRoot })
    let stdout = ''
    let stderr = ''
    child.stdout.on('data', (d) => (stdout += d))
    child.stderr.on('data', (d) => (stderr += d))
    child.on('error', reject)
    child.on('close', (status) => resolve({ status, stdout, stderr }))
  })
}

beforeAll(() => ensureCliBundle(), 120_000)

describe('counterpart CLI', { timeout: 60_000 }, () => {
  it.concurrent('estimate prints the result JSON', async () => {
    const r = await run('estimate', '--panel', fatalities, '--spec', file('ok.json', '{"design":"did","treatmentColumn":"beertax"}'))
    expect(r.stderr).toBe('')
    expect(r.status).toBe(0)
    const out = JSON.parse(r.stdout)
    expect(out.effect.term).toBe('beertax')
    expect(out.effect.estimate).toBeCloseTo(-0.6399799857, 9)
    expect(out.smallSample).toBe('nested')
  })

  it.concurrent('score prints donor scores, with caller weights', async () => {
    const spec = file('score.json', '{"design":"did","treated":["u02"],"start":11,"comparison":["u16","u29","u06"]}')
    const r = await run('score', '--panel', synthetic, '--spec', spec, '--weights', '{"rmspeDemeaned":1}')
    expect(r.status).toBe(0)
    const out = JSON.parse(r.stdout)
    expect(out.rows.map((x: { unit: string }) => x.unit)).toEqual(['u29', 'u16', 'u06'])
  })

  const bad: [string, string[], RegExp][] = [
    ['an unknown spec key', ['estimate', '--panel', fatalities, '--spec', file('k.json', '{"design":"did","colour":"red"}')], /invalid spec: spec: unknown key "colour"/],
    ['a spec that is not JSON', ['estimate', '--panel', fatalities, '--spec', file('j.json', '{design:')], /is not valid JSON/],
    ['an unknown unit', ['estimate', '--panel', fatalities, '--spec', file('u.json', '{"design":"did","treated":["zz"],"start":1985}')], /unknown unit "zz" in treated/],
    ['a missing panel file', ['estimate', '--panel', path.join(dir, 'none.csv'), '--spec', file('m.json', '{"design":"did"}')], /cannot read the --panel file ".*none\.csv": no such file/],
    ['a non-numeric cell', ['estimate', '--panel', file('p.csv', 'unit,period,outcome,x\na,1,1,0\na,2,2,1\nb,1,oops,0\nb,2,3,0\n'), '--spec', file('n.json', '{"design":"did","treatmentColumn":"x"}')], /line 4, column "outcome": "oops" is not a number/],
    ['an inference method that cannot run', ['estimate', '--panel', fatalities, '--spec', file('s.json', '{"design":"its","treated":["al"],"start":1985,"inference":{"method":"permutation"}}')], /inference.method "permutation" cannot run: a single series has no comparison units to serve as placebos; use "analytic"/],
    ['too many draws', ['estimate', '--panel', fatalities, '--spec', file('d.json', '{"design":"did","treated":["al"],"start":1985,"inference":{"draws":5000000}}')], /spec.inference.draws: draws: at most 100,000/],
    ['an unknown command', ['fit', '--panel', fatalities], /unknown command "fit"/],
    ['a missing option', ['estimate', '--panel', fatalities], /missing --spec/],
  ]
  for (const [what, args, message] of bad) {
    it.concurrent(`refuses ${what}: status 2, message on stderr, empty stdout`, async () => {
      const r = await run(...args)
      expect(r.status).toBe(2)
      expect(r.stdout).toBe('')
      expect(r.stderr).toMatch(message)
      expect(r.stderr.startsWith('counterpart: ')).toBe(true)
    })
  }
})
