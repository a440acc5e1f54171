/** GET /api/invitations — admin: invitations with their state (pending, accepted, expired). */
import { desc } from 'drizzle-orm'
import { invitations } from '~~/db/schema'

export default defineEventHandler(async (event) => {
  await requireUser(event, ADMIN)
  const rows = await useDb().select({
    id: invitations.id, email: invitations.email, name: invitations.name, role: invitations.role,
    expiresAt: invitations.expiresAt, acceptedAt: invitations.acceptedAt, createdAt: invitations.createdAt,
  }).from(invitations).orderBy(desc(invitations.createdAt)).limit(200)
  const now = Date.now()
  return rows.map(r => ({ ...r, state: r.acceptedAt ? 'accepted' : r.expiresAt.getTime() < now ? 'expired' : 'pending' }))
})
