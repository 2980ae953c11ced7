// Applies the committed drizzle-kit migrations and installs the job queue's own schema (`pgboss`) and queues (idempotent).
import { migrate } from 'drizzle-orm/node-postgres/migrator'
import { fileURLToPath } from 'node:url'
import type { Db } from './client'
import { installJobQueue } from '../jobs/queue'

export const migrationsFolder = fileURLToPath(new URL('../../drizzle', import.meta.url))

export async function runMigrations(db: Db) {
  await migrate(db, { migrationsFolder })
  await installJobQueue(db)
}
