/**
 * zod for routes, through h3's own validated readers:
 *   const body = await readValidatedBody(event, check(schema))
 *   const query = await getValidatedQuery(event, check(schema, 'query'))
 *   const params = await getValidatedRouterParams(event, check(schema, 'path'))
 * A failed parse becomes 400 {message, data: {issues: [{path, message, code}]}}: h3 wraps what the
 * validator throws as the error's data, so the validator throws an Error carrying only `issues`.
 * Before the schema runs, any text holding a NUL character (in a value or a key, at any depth) is
 * refused: PostgreSQL cannot store it in text, and no field of ours has a use for it.
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

/** The path of the first string (value or key) holding a NUL character, or null (walks without recursion). */
export function findNul(value: unknown): string[] | null {
  const stack: { v: unknown, path: string[] }[] = [{ v: value, path: [] }]
  while (stack.length) {
    const { v, path } = stack.pop()!
    if (typeof v === 'string') {
      if (v.includes('\u0000')) return path
      continue
    }
    if (v === null || typeof v !== 'object') continue
    for (const [key, child] of Object.entries(v)) {
      if (key.includes('\u0000')) return [...path, key.replace(/\u0000/g, '\\0')]
      stack.push({ v: child, path: [...path, key] })
    }
  }
  return null
}

export function check<T extends z.ZodType>(schema: T, what = 'request body') {
  return (value: unknown): z.infer<T> => {
    const nul = findNul(value)
    if (nul) {
      const path = nul.join('.')
      throw new ValidationFailure(`Invalid ${what}: ${path ? `${path}: ` : ''}text may not contain a NUL character (\\0).`, [{ path, message: 'Text may not contain a NUL character.', code: 'nul_character' }])
    }
    const result = schema.safeParse(value ?? {})
    if (!result.success) {
      const issues = result.error.issues.map(i => ({ path: i.path.join('.'), message: i.message, code: i.code }))
      const first = issues[0]
      throw new ValidationFailure(`Invalid ${what}: ${first?.path ? `${first.path}: ` : ''}${first?.message ?? 'bad input'}`, issues)
    }
    return result.data
  }
}
