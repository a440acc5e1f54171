/** The database handle shared by every route: one pg pool per server process. */
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import * as schema from '~~/db/schema'

export type Db = NodePgDatabase<typeof schema>

let pool: pg.Pool | undefined
let handle: Db | undefined

/** Connections per process (COUNTERPART_DB_CONNECTIONS, default 20): a request's transaction keeps its connection across several round trips. */
export function poolSize(): number {
  const asked = Number(process.env.COUNTERPART_DB_CONNECTIONS)
  return Number.isInteger(asked) && asked > 0 ? asked : 20
}

export function usePool(): pg.Pool {
  if (!pool) {
    const url = process.env.DATABASE_URL || useRuntimeConfig().databaseUrl
    pool = new pg.Pool({ connectionString: url, max: poolSize() })
  }
  return pool
}

export function useDb(): Db {
  if (!handle) handle = drizzle(usePool(), { schema })
  return handle
}

export { schema }
