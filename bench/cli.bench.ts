/**
 * Command-line figure: `counterpart estimate` (the prebuilt bundle, as `npm run cli` runs it)
 * on a long CSV of 3,000 units x 240 periods (720,000 rows; 300 units treated from period
 * 121), two-way fixed effects with CR1 errors clustered by unit, as a whole process: start,
 * read, estimate, print. Against the same model written with numpy (bench/reference/
 * twfe_numpy.py: within transformation, one slope, clustered errors) on the same file, also
 * as a whole process; the goal is a command line no slower than that reference. Both must
 * agree on the estimate and its standard error. Skips the reference when python3 cannot
 * import numpy. Follows the contract of bench/index.ts.
 */
import { execFileSync, spawnSync } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { bundlePath, ensureCliBundle } from '../cli/bundle.mjs'
import { type BenchFigure, medianMs } from './index'
import { uniforms } from './uniforms'

const here = path.dirname(fileURLToPath(import.meta.url))
const UNITS = 3000
const PERIODS = 240
const RUNS = 3

function panelCsv(): string {
  const r = uniforms(2)
  const parts = ['unit,period,outcome,treat\n']
  for (let u = 0; u < UNITS; u++) {
    const level = 50 + 10 * r()
    const trend = 0.2 * (r() - 0.5)
    const id = `u${String(u).padStart(4, '0')}`
    let chunk = ''
    for (let t = 0; t < PERIODS; t++) {
      const d = u < 300 && t + 1 >= 121 ? 1 : 0
      chunk += `${id},${t + 1},${(level + trend * t + Math.sin(t / 5) + 2 * d + r() - 0.5).toFixed(6)},${d}\n`
    }
    parts.push(chunk)
  }
  return parts.join('')
}

const numpyAvailable = () => spawnSync('python3', ['-c', 'import numpy'], { stdio: 'ignore' }).status === 0

export async function run(): Promise<BenchFigure[]> {
  const dir = mkdtempSync(path.join(tmpdir(), 'counterpart-cli-bench-'))
  try {
    const csv = path.join(dir, 'panel.csv')
    const spec = path.join(dir, 'spec.json')
    writeFileSync(csv, panelCsv())
    writeFileSync(spec, JSON.stringify({ design: 'did', treatmentColumn: 'treat' }))
    await ensureCliBundle()
    const cli = () => JSON.parse(execFileSync(process.execPath, [bundlePath, 'estimate', '--panel', csv, '--spec', spec], { encoding: 'utf8', maxBuffer: 1 << 26 }))
    const fromSource = () => execFileSync(process.execPath, [path.join(here, '../node_modules/tsx/dist/cli.mjs'), path.join(here, '../cli/counterpart.ts'), 'estimate', '--panel', csv, '--spec', spec], { encoding: 'utf8', maxBuffer: 1 << 26 })
    const out = cli()
    const figures: BenchFigure[] = []
    let reference: number | null = null
    if (numpyAvailable()) {
      const script = path.join(here, 'reference/twfe_numpy.py')
      const numpy = () => execFileSync('python3', [script, csv], { encoding: 'utf8' })
      const [est, se] = numpy().trim().split(' ').map(Number)
      const agree = (a: number, b: number) => Math.abs(a - b) <= 1e-8 * Math.abs(b)
      if (!agree(out.effect.estimate, est!) || !agree(out.effect.se, se!)) {
        throw new Error(`cli bench: the command line (${out.effect.estimate}, se ${out.effect.se}) and the numpy reference (${est}, se ${se}) disagree`)
      }
      reference = await medianMs(numpy, RUNS)
      figures.push({ name: '  (reference: numpy within transformation + CR1, same file, whole process)', medianMs: reference, target: null })
    } else {
      figures.push({ name: '  (reference skipped: python3 cannot import numpy)', medianMs: 0, target: null })
    }
    figures.unshift({ name: 'CLI estimate, two-way FE + CR1, 3,000 x 240 CSV (whole process)', medianMs: await medianMs(cli, RUNS), target: reference === null ? null : Math.round(reference) })
    figures.push({ name: '  (for reference: the same command compiled from source at each start)', medianMs: await medianMs(fromSource, 1), target: null })
    return figures
  } finally {
    rmSync(dir, { recursive: true, force: true })
  }
}
