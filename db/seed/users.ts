/** Demo accounts for the local demo only (DESIGN.md). Idempotent: existing accounts are reset to the demo password and role. */
import bcrypt from 'bcryptjs'
import { sql } from 'drizzle-orm'
import type { NodePgDatabase } from 'drizzle-orm/node-postgres'
import { users } from '../schema'

export const DEMO_PASSWORD = 'counterpart-demo'
export const DEMO_USERS = [
  { email: 'admin@counterpart.test', name: 'Ada Admin', role: 'admin' },
  { email: 'analyst@counterpart.test', name: 'Noor Analyst', role: 'analyst' },
  { email: 'reviewer@counterpart.test', name: 'Remy Reviewer', role: 'reviewer' },
] as const

export async function seedUsers(db: NodePgDatabase<Record<string, unknown>>): Promise<void> {
  const passwordHash = await bcrypt.hash(DEMO_PASSWORD, 10)
  for (const u of DEMO_USERS) {
    await db.insert(users).values({ ...u, passwordHash, active: true })
      .onConflictDoUpdate({ target: users.email, set: { role: sql`excluded.role`, passwordHash, active: true } })
  }
}
