/**
 * Form checks with the same zod schemas the server uses: the first message per field.
 *   const errors = fieldErrors(jurisdictionCreateSchema, form)   // {} when valid
 */
import type { z } from 'zod'

export function fieldErrors(schema: z.ZodType, value: unknown): Record<string, string> {
  const result = schema.safeParse(value)
  if (result.success) return {}
  const out: Record<string, string> = {}
  for (const issue of result.error.issues) {
    const key = issue.path.length ? String(issue.path[0]) : 'form'
    out[key] ??= issue.message
  }
  return out
}

/** "a=1\nb=yes" lines into attributes (numbers and true/false read as such). */
export function parseAttributes(text: string): Record<string, string | number | boolean> {
  const out: Record<string, string | number | boolean> = {}
  for (const line of text.split('\n')) {
    const i = line.indexOf('=')
    if (i < 1) continue
    const key = line.slice(0, i).trim()
    const raw = line.slice(i + 1).trim()
    out[key] = raw === 'true' ? true : raw === 'false' ? false : raw !== '' && Number.isFinite(Number(raw)) ? Number(raw) : raw
  }
  return out
}

export function formatAttributes(attributes: Record<string, unknown> | null | undefined): string {
  return Object.entries(attributes ?? {}).map(([k, v]) => `${k}=${v}`).join('\n')
}

/** "A, B C" into ["A", "B", "C"]. */
export function splitCodes(text: string): string[] {
  return text.split(/[\s,;]+/).map(s => s.trim()).filter(Boolean)
}
