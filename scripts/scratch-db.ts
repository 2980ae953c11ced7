// A throwaway PostgreSQL cluster with a migrated, seeded database, for benchmark scripts (not the data npm start keeps).
import { join } from 'node:path'
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import { seedDemo } from '../server/db/seed'
import { dataRoot } from './env'
import { databaseUrl, dropDatabase, ensureDatabase, startCluster, stopCluster } from './pg'

export async function scratchDatabase(name: string, port = Number(process.env.BENCH_PG_PORT ?? 54349)) {
  const dir = join(dataRoot, `pg-bench`)
  await startCluster({ dataDir: dir, port, durable: false })
  dropDatabase(port, name)
  ensureDatabase(port, name)
  const url = databaseUrl(port, name)
  const { db, pool } = createDb(url, 5)
  await runMigrations(db)
  await seedDemo(db)
  await pool.end()
  return { url, stop: () => stopCluster(dir) }
}
