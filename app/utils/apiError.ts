/** The message a person should read from a failed $fetch (the server's own words when it sent them). */
export function apiErrorMessage(e: unknown, fallback = 'The request failed.'): string {
  const err = e as { data?: { message?: string }, message?: string }
  return err?.data?.message ?? err?.message ?? fallback
}
