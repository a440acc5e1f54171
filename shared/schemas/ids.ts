/**
 * Row ids: the database keeps them in 32-bit integer columns, so an id is a whole number from 1
 * to 2^31 - 1. Anything else (a fraction, 2^31 or more, text) is refused with 400 before it
 * reaches a query, instead of failing there with a server error.
 */
import { z } from 'zod'

export const MAX_ID = 2 ** 31 - 1

/** One id in a path or query (text coerced to a number), e.g. `recordId('study')`. */
export function recordId(what = 'id') {
  const message = `The ${what} is a positive whole number below 2,147,483,648.`
  return z.coerce.number({ message }).int({ message }).positive({ message }).max(MAX_ID, { message })
}

/** One id in a JSON body (a number, not text). */
export function bodyId(message: string) {
  return z.number({ message }).int({ message }).positive({ message }).max(MAX_ID, { message })
}

/** `{ id }` route parameters. */
export const idParams = (what = 'id') => z.object({ id: recordId(what) })
