/**
 * The error a job's progress() throws once the job has been cancelled (POST
 * /api/jobs/:id/cancel). A handler lets it propagate (after undoing its own work, e.g. a
 * transaction rollback) and the job ends in state "cancelled", not "failed".
 */
export class JobCancelled extends Error {
  constructor(message = 'Cancelled; the job stopped before it finished.') {
    super(message)
    this.name = 'JobCancelled'
  }
}

/** True for a JobCancelled, also one re-thrown across module copies (matched by name). */
export function isJobCancelled(e: unknown): e is JobCancelled {
  return e instanceof Error && e.name === 'JobCancelled'
}
