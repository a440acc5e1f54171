/**
 * The validator's problem list: every problem is counted, the first MAX_PROBLEMS are kept
 * (a reply stays small however broken the file), and column names quoted are clipped. Pure.
 */
import type { UploadProblem } from '../../../../shared/schemas/uploads'
import { clip, MAX_PROBLEMS } from '../limits'
import type { Report, Validation } from './types'

export interface Problems { list: UploadProblem[], count: number, report: Report }

export function collectProblems(max = MAX_PROBLEMS): Problems {
  const p: Problems = {
    list: [],
    count: 0,
    report: (row, column, problem) => {
      p.count++
      if (p.list.length < max) p.list.push({ row, column: column == null ? null : clip(column), problem })
    },
  }
  return p
}

/** The message of a failed validation: the count and the first problem. */
export function problemMessage(v: Pick<Validation, 'problems' | 'problemCount'>): string {
  const first = v.problems[0]
  if (!first) return 'The file has problems.'
  const where = [first.row != null ? `row ${first.row}` : null, first.column ? `column "${first.column}"` : null].filter(Boolean).join(', ')
  return `The file has ${v.problemCount.toLocaleString('en')} problem${v.problemCount === 1 ? '' : 's'}; nothing was imported. First: ${where ? `${where}: ` : ''}${first.problem}`
}
