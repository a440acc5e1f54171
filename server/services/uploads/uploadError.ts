/** A file that cannot be taken, with the problems (row, column, problem) to show and the HTTP status. Pure. */
import type { UploadProblem } from '../../../shared/schemas/uploads'

export class UploadError extends Error {
  constructor(message: string, public readonly problems: UploadProblem[] = [], public readonly statusCode = 400) {
    super(message)
    this.name = 'UploadError'
  }
}
