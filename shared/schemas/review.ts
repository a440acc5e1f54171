/**
 * Review of a study (DESIGN.md step 8): POST /api/studies/:id/review with
 *   {action: "request", reviewerId, note?}  the owner (or an admin) hands a draft to a reviewer
 *   {action: "approve", note?}              a reviewer approves: the study is locked
 *   {action: "return", note}                a reviewer sends it back to draft with a note
 * and the study's comment thread.
 */
import { z } from 'zod'

const note = z.string().trim().max(5000)

export const reviewActionSchema = z.discriminatedUnion('action', [
  z.strictObject({ action: z.literal('request'), reviewerId: z.number().int().positive({ message: 'Choose a reviewer.' }), note: note.optional() }),
  z.strictObject({ action: z.literal('approve'), note: note.optional() }),
  z.strictObject({ action: z.literal('return'), note: note.min(1, 'Say what needs to change before the study can be approved.') }),
], { message: 'action must be request, approve or return.' })
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
