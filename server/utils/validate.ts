/**
 * zod for routes, through h3's own validated readers:
 *   const body = await readValidatedBody(event, check(schema))
 *   const query = await getValidatedQuery(event, check(schema, 'query'))
 *   const params = await getValidatedRouterParams(event, check(schema, 'path'))
 * A failed parse becomes 400 {message, data: {issues: [{path, message, code}]}}: h3 wraps what the
 * validator throws as the error's data, so the validator throws an Error carrying only `issues`.
 */
import type { z } from 'zod'

export interface FieldIssue { path: string, message: string, code?: string }

export function badRequest(message: string, issues: FieldIssue[] = []): never {
  throw createError({ statusCode: 400, statusMessage: 'Bad Request', message, data: { issues } })
}

class ValidationFailure extends Error {
  constructor(message: string, public readonly issues: FieldIssue[]) {
    super(message)
  }
}

export function check<T extends z.ZodType>(schema: T, what = 'request body') {
  return (value: unknown): z.infer<T> => {
    const result = schema.safeParse(value ?? {})
    if (!result.success) {
      const issues = result.error.issues.map(i => ({ path: i.path.join('.'), message: i.message, code: i.code }))
      const first = issues[0]
      throw new ValidationFailure(`Invalid ${what}: ${first?.path ? `${first.path}: ` : ''}${first?.message ?? 'bad input'}`, issues)
    }
    return result.data
  }
}
