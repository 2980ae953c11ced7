// Applies the committed drizzle-kit migrations (idempotent).
import { migrate } from 'drizzle-orm/node-postgres/migrator'
import { fileURLToPath } from 'node:url'
import type { Db } from './client'

export const migrationsFolder = fileURLToPath(new URL('../../drizzle', import.meta.url))

export async function runMigrations(db: Db) {
  await migrate(db, { migrationsFolder })
}
