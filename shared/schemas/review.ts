/**
 * Review of a study (DESIGN.md step 8): POST /api/studies/:id/review with
 *   {action: "request", reviewerId, note?}  the owner (or an admin) hands a draft to a reviewer
 *   {action: "approve", note?}              a reviewer approves: the study is locked
 *   {action: "return", note}                a reviewer sends it back to draft with a note
 *   {action: "withdraw", note?}             the owner (or an admin) takes back a request: draft again
 * and the study's comment thread.
 */
import { z } from 'zod'
import { bodyId } from './ids'

const note = z.string().trim().max(5000)

export const reviewActionSchema = z.discriminatedUnion('action', [
  z.strictObject({ action: z.literal('request'), reviewerId: bodyId('Choose a reviewer.'), note: note.optional() }),
  z.strictObject({ action: z.literal('approve'), note: note.optional() }),
  z.strictObject({ action: z.literal('return'), note: note.min(1, 'Say what needs to change before the study can be approved.') }),
  z.strictObject({ action: z.literal('withdraw'), note: note.optional() }),
], { message: 'action must be request, withdraw, approve or return.' })
export type ReviewAction = z.infer<typeof reviewActionSchema>

export const commentCreateSchema = z.strictObject({
  body: z.string().trim().min(1, 'Write a comment first.').max(5000),
})

export const STATUS_LABELS: Record<string, string> = {
  draft: 'Draft',
  in_review: 'In review',
  approved: 'Approved',
  archived: 'Archived',
}
