// The database handle: a pg pool wrapped by Drizzle. Created by the caller, never at import time.
import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import * as schema from './schema/index'

export type Db = NodePgDatabase<typeof schema> & { $client: pg.Pool }
/** A transaction or the database itself: repositories accept either. */
export type Trx = Parameters<Parameters<Db['transaction']>[0]>[0]
export type Tx = Trx | Db

export function createDb(url: string, max = 10): { db: Db; pool: pg.Pool } {
  const pool = new pg.Pool({ connectionString: url, max, connectionTimeoutMillis: 5000 })
  // An idle client losing its connection (database restarted) must not crash the process.
  pool.on('error', (err) => console.error('[db] idle client error:', err.message))
  // A checked-out client (inside a transaction) that loses its server emits 'error' too; without a listener that ends the process.
  pool.on('connect', (client) => client.on('error', (err) => console.error('[db] connection lost:', err.message)))
  const db = drizzle(pool, { schema, casing: 'snake_case' }) as Db
  return { db, pool }
}
export { schema }
