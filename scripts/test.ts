// `npm test`: a throwaway PostgreSQL cluster (speed over durability), a migrated + seeded template database,
// the client build for the browser tests, the typecheck, then every Vitest project. Exits non-zero on any failure.
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import { seedDemo } from '../server/db/seed'
import { root, test } from './env'
import { databaseUrl, dropDatabase, ensureDatabase, startCluster, stopCluster } from './pg'

const t0 = Date.now()
await startCluster({ dataDir: test.pgDir, port: test.pgPort, durable: false })
dropDatabase(test.pgPort, test.dbName)
ensureDatabase(test.pgPort, test.dbName)
{
  const { db, pool } = createDb(databaseUrl(test.pgPort, test.dbName), 1)
  await runMigrations(db)
  await seedDemo(db)
  await pool.end()
}
console.log(`[test] PostgreSQL on 127.0.0.1:${test.pgPort}, template database ready in ${((Date.now() - t0) / 1000).toFixed(1)} s`)

if (!process.env.SKIP_BUILD) {
  const b = spawnSync(join(root, 'node_modules/.bin/vite'), ['build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' })
  if (b.status !== 0) process.exit(b.status ?? 1)
}

const args = process.argv.slice(2)
// With no arguments the types and the lint rules are checked first (client and server), so nothing keeps passing with a
// type error or a lint finding in it.
if (!args.length) {
  for (const script of ['typecheck', 'lint']) {
    const r = spawnSync('npm', ['run', '-s', script], { cwd: root, stdio: 'inherit' })
    if (r.status !== 0) {
      console.error(`[test] ${script} failed`)
      if (!process.env.KEEP_TEST_DB) stopCluster(test.pgDir)
      process.exit(r.status ?? 1)
    }
  }
}
const env = { ...process.env, TEST_PG_PORT: String(test.pgPort), TEST_DATABASE_TEMPLATE: test.dbName, NODE_ENV: 'test' }
const vitest = (a: string[]) => spawnSync(join(root, 'node_modules/.bin/vitest'), ['run', ...a], { cwd: root, stdio: 'inherit', env }).status ?? 1
// With no arguments: everything, the browser flows after the rest so they do not compete for the two cores.
const status = args.length ? vitest(args) : Math.max(vitest(['--project', 'unit', '--project', 'server', '--project', 'client']), vitest(['--project', 'e2e']))
if (!process.env.KEEP_TEST_DB) stopCluster(test.pgDir)
process.exit(status)
