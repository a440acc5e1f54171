/**
 * EngineError: every refusal of the engine (bad spec, bad data, a design that cannot be
 * estimated). `code` is stable for programs; `message` names the problem for people.
 * The CLI prints the message and exits with status 2; server routes answer 400/422 with it.
 */
export type EngineErrorCode =
  | 'invalid_spec'
  | 'unknown_column'
  | 'unknown_unit'
  | 'bad_period'
  | 'non_numeric'
  | 'duplicate_row'
  | 'empty_panel'
  | 'non_positive_log'
  | 'no_pre_periods'
  | 'no_post_periods'
  | 'single_cluster'
  | 'singular_design'
  | 'too_few_observations'
  | 'not_available'
  | 'invalid_input'
  | 'not_converged'

export class EngineError extends Error {
  readonly code: EngineErrorCode
  readonly issues: string[]

  constructor(code: EngineErrorCode, message: string, issues: string[] = []) {
    super(message)
    this.name = 'EngineError'
    this.code = code
    this.issues = issues
  }
}

export const isEngineError = (e: unknown): e is EngineError => e instanceof EngineError

/** Lists at most `max` quoted items, then "and N more". */
export function listSome(items: readonly string[], max = 5): string {
  const shown = items.slice(0, max).map((s) => `"${s}"`).join(', ')
  return items.length > max ? `${shown} and ${items.length - max} more` : shown
}
