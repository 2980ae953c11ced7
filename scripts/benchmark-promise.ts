// Benchmark of the promise check on the seeded demo workshop: p50/p95 over ~50 calls without and with the 500-run range.
// usage: npx tsx scripts/benchmark-promise.ts   (own throwaway cluster on TEST_PG_PORT / TEST_PG_DIR, or DATABASE_URL of a seeded database)
import { quantile } from 'simple-statistics'
import { eq } from 'drizzle-orm'
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import * as s from '../server/db/schema/index'
import { seedDemo } from '../server/db/seed'
import type { Actor, Deps } from '../server/lib/route'
import { Realtime } from '../server/realtime/hub'
import { checkPromise } from '../server/services/promise'
import { promiseCheckInput } from '../shared/schemas/promise'
import { test } from './env'
import { databaseUrl, dropDatabase, ensureDatabase, startCluster, stopCluster } from './pg'

const CALLS = Number(process.env.CALLS ?? 50)
let url = process.env.DATABASE_URL
const own = !url
if (own) {
  await startCluster({ dataDir: test.pgDir, port: test.pgPort, durable: false })
  dropDatabase(test.pgPort, 'millgrain_bench')
  ensureDatabase(test.pgPort, 'millgrain_bench')
  url = databaseUrl(test.pgPort, 'millgrain_bench')
}
const { db, pool } = createDb(url!, 5)
if (own) {
  await runMigrations(db)
  await seedDemo(db)
}
const [owner] = await db.select().from(s.users).where(eq(s.users.role, 'sales')).limit(1)
const actor: Actor = { userId: owner!.id, workshopId: owner!.workshopId, role: 'sales', personId: null, name: owner!.name }
const deps: Deps = { db, realtime: new Realtime() }
const routings = await db.select({ id: s.routings.id }).from(s.routings).where(eq(s.routings.workshopId, actor.workshopId))

async function measure(range: boolean) {
  const ms: number[] = []
  let cold = 0
  for (let i = 0; i < CALLS + 1; i++) {
    const input = promiseCheckInput.parse({
      routingId: routings[i % routings.length]!.id,
      params: { stoneCount: i % 7, quantity: 1 + (i % 3) },
      range,
      seed: i + 1,
    })
    const t0 = performance.now()
    await checkPromise(deps, actor, input)
    const t = performance.now() - t0
    if (i === 0) cold = t
    else ms.push(t)
  }
  return { cold, p50: quantile(ms, 0.5), p95: quantile(ms, 0.95), max: Math.max(...ms) }
}

const without = await measure(false)
const withRange = await measure(true)
const f = (n: number) => `${n.toFixed(0).padStart(5)} ms`
console.log(`promise check on the demo workshop, ${CALLS} calls each (first call, which builds the quick plan or loads the history, shown apart)`)
console.log(`  without range       p50 ${f(without.p50)}   p95 ${f(without.p95)}   max ${f(without.max)}   first ${f(without.cold)}   (target p95 < 300 ms)`)
console.log(
  `  with 500-run range  p50 ${f(withRange.p50)}   p95 ${f(withRange.p95)}   max ${f(withRange.max)}   first ${f(withRange.cold)}   (target p95 < 1500 ms)`,
)
await pool.end()
if (own) {
  dropDatabase(test.pgPort, 'millgrain_bench')
  stopCluster(test.pgDir)
}
