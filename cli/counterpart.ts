/**
 * Counterpart command line, for batch runs and reproducibility (the same spec a study stores):
 *
 *   npm run --silent cli -- estimate --panel data.csv --spec spec.json
 *   npm run --silent cli -- score --panel data.csv --spec spec.json [--weights '{"rmspe":2}']
 *
 * `estimate` prints the result JSON, `score` the donor scores. The panel CSV is long: a header
 * row, then one row per unit and period. Bad input (unreadable file, invalid spec, unknown
 * unit or column, non-numeric cell, singular design, ...) prints one message naming the
 * problem on stderr and exits with status 2, printing nothing on stdout. Any other failure
 * exits with status 1.
 *
 * `npm run cli` runs the prebuilt bundle dist/cli/counterpart.mjs (cli/bundle.mjs; `npm run
 * build:cli`), rebuilt first when a source file changed. The panel is read straight into
 * typed arrays (tableFromCsv), with no object per row.
 */
import { readFileSync } from 'node:fs'
import { EngineError, estimate, isEngineError, scoreDonors, tableFromCsv } from '../server/engine/index'

const USAGE = `usage: counterpart estimate --panel FILE.csv --spec FILE.json
       counterpart score --panel FILE.csv --spec FILE.json [--weights JSON]`

class UsageError extends Error {}

function parseArgs(argv: string[]): { command: string; options: Record<string, string> } {
  const [command, ...rest] = argv
  if (!command || command === '--help' || command === '-h') throw new UsageError(USAGE)
  if (command !== 'estimate' && command !== 'score') throw new UsageError(`unknown command "${command}"\n${USAGE}`)
  const allowed = command === 'score' ? ['panel', 'spec', 'weights'] : ['panel', 'spec']
  const options: Record<string, string> = {}
  for (let i = 0; i < rest.length; i++) {
    const m = /^--([a-z]+)(?:=(.*))?$/.exec(rest[i])
    if (!m || !allowed.includes(m[1])) throw new UsageError(`unknown option "${rest[i]}" for ${command}\n${USAGE}`)
    const value = m[2] ?? rest[++i]
    if (value === undefined) throw new UsageError(`option --${m[1]} needs a value`)
    options[m[1]] = value
  }
  for (const need of ['panel', 'spec']) if (!options[need]) throw new UsageError(`missing --${need}\n${USAGE}`)
  return { command, options }
}

function readText(file: string, what: string): string {
  try {
    return readFileSync(file, 'utf8')
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code
    throw new UsageError(`cannot read the ${what} file "${file}"${code === 'ENOENT' ? ': no such file' : code ? ` (${code})` : ''}`)
  }
}

function readJson(text: string, what: string): unknown {
  try {
    return JSON.parse(text)
  } catch (e) {
    throw new UsageError(`the ${what} is not valid JSON: ${(e as Error).message}`)
  }
}

function main(argv: string[]): number {
  try {
    const { command, options } = parseArgs(argv)
    const spec = readJson(readText(options.spec, '--spec'), `--spec file "${options.spec}"`)
    const panel = tableFromCsv(readText(options.panel, '--panel'))
    let output: unknown
    if (command === 'estimate') output = estimate(panel, spec)
    else {
      const w = options.weights
      const weights = w === undefined ? undefined : readJson(w.trim().startsWith('{') ? w : readText(w, '--weights'), '--weights value')
      if (weights !== undefined && (weights === null || typeof weights !== 'object' || Array.isArray(weights))) {
        throw new UsageError('--weights must be a JSON object such as {"rmspeDemeaned": 2, "correlation": 1}')
      }
      output = scoreDonors(panel, spec, weights as Record<string, number> | undefined)
    }
    process.stdout.write(`${JSON.stringify(output, null, 2)}\n`)
    return 0
  } catch (e) {
    if (e instanceof UsageError || isEngineError(e)) {
      process.stderr.write(`counterpart: ${e.message}\n`)
      if (e instanceof EngineError && e.issues.length > 1) for (const i of e.issues) process.stderr.write(`  - ${i}\n`)
      return 2
    }
    process.stderr.write(`counterpart: internal error: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}\n`)
    return 1
  }
}

process.exitCode = main(process.argv.slice(2))
