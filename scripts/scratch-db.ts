// A private PostgreSQL cluster with a migrated, seeded database, for benchmark scripts (not the data npm start keeps):
// throwaway by default (fsync off), or durable with `--durable` / BENCH_DURABLE=1 (fsync on, as `npm start` runs).
import { join } from 'node:path'
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import { seedDemo } from '../server/db/seed'
import { dataRoot } from './env'
import { databaseUrl, dropDatabase, ensureDatabase, startCluster, stopCluster } from './pg'

/** Which cluster the benchmarks use: the durable one has its own data dir and port, so it never meets `.data/pg`. */
export function benchCluster(env: NodeJS.ProcessEnv = process.env, argv: string[] = process.argv) {
  const durable = argv.includes('--durable') || env.BENCH_DURABLE === '1'
  const dir = env.BENCH_PG_DIR ?? join(dataRoot, durable ? 'pg-bench-durable' : 'pg-bench')
  const port = Number(env.BENCH_PG_PORT ?? (durable ? 54359 : 54349))
  return { durable, dir, port }
}

export async function scratchDatabase(name: string) {
  const { durable, dir, port } = benchCluster()
  await startCluster({ dataDir: dir, port, durable })
  console.log(`[bench] ${durable ? 'durable cluster (fsync on, synchronous commit, as npm start)' : 'throwaway cluster (fsync off)'} in ${dir}, port ${port}`)
  dropDatabase(port, name)
  ensureDatabase(port, name)
  const url = databaseUrl(port, name)
  const { db, pool } = createDb(url, 5)
  await runMigrations(db)
  await seedDemo(db)
  await pool.end()
  return { url, stop: () => stopCluster(dir) }
}
