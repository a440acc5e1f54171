// Adds up the vitest and Playwright JSON reports and prints "N passed, N failed".
// Exit 1 when anything failed or when a report is missing (a suite that did not run counts as failed).
import { existsSync, readFileSync, writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'

const [vitestFile, playwrightFile] = process.argv.slice(2)
let passed = 0
let failed = 0
let skipped = 0

if (existsSync(vitestFile)) {
  const v = JSON.parse(readFileSync(vitestFile, 'utf8'))
  passed += v.numPassedTests ?? 0
  failed += v.numFailedTests ?? 0
  skipped += (v.numPendingTests ?? 0) + (v.numTodoTests ?? 0)
  // a file that failed to load has no tests but fails the run
  for (const file of v.testResults ?? []) {
    if (file.status === 'failed' && (file.assertionResults ?? []).length === 0) failed += 1
  }
}
else failed += 1

if (existsSync(playwrightFile)) {
  const p = JSON.parse(readFileSync(playwrightFile, 'utf8'))
  passed += (p.stats?.expected ?? 0) + (p.stats?.flaky ?? 0)
  failed += p.stats?.unexpected ?? 0
  skipped += p.stats?.skipped ?? 0
  failed += (p.errors ?? []).length
}
else failed += 1

const line = `${passed} passed, ${failed} failed${skipped ? `, ${skipped} skipped` : ''}`
writeFileSync(join(dirname(vitestFile), 'totals.txt'), `${line}\n`)
console.log(line)
process.exit(failed > 0 ? 1 : 0)
