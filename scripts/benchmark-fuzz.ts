// `npm run benchmark:fuzz`: the seeded API fuzzer at volume (≥ 10,000 requests over every JSON route) against the app on a
// scratch copy of the demo data. Prints requests, the status histogram, the 5xx count (must be 0) and the time; exits 1 on any failure.
import { createServer } from 'node:http'
import { createApp } from '../server/app'
import { loadConfig } from '../server/config'
import { createDb } from '../server/db/client'
import { Realtime } from '../server/realtime/hub'
import { allRoutes } from '../server/routes/index'
import { fuzzRoutes, loadIdPools, makeSessions, planTargets, printPlan } from '../tests/server/fuzz/runner'
import { scratchDatabase } from './scratch-db'

const TOTAL = Number(process.env.FUZZ_REQUESTS ?? 10_000)
const SEED = Number(process.env.FUZZ_SEED ?? 424242)

const { url, stop } = await scratchDatabase('millgrain_bench_fuzz')
const { db, pool } = createDb(url, 10)
const config = loadConfig({ DATABASE_URL: url, SESSION_SECRET: 'fuzz-secret-fuzz-secret', NODE_ENV: 'test', LOGIN_ATTEMPTS_PER_15_MIN: '100000' })
const { app } = createApp({ db, pool, config, realtime: new Realtime() })
const server = createServer(app)
await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()))

const plan = planTargets(allRoutes)
printPlan(plan)
const runsPerRoute = Math.ceil(TOTAL / plan.targets.length)
const sessions = await makeSessions(server)
const pools = await loadIdPools(db)
// Server-side error logs (each 5xx logs one) stay visible; the fuzzer's own summary follows.
const t0 = performance.now()
const stats = await fuzzRoutes({ routes: allRoutes, sessions, pools, runsPerRoute, seed: SEED }, plan)
const seconds = (performance.now() - t0) / 1000

const fivexx = Object.entries(stats.byStatus)
  .filter(([s]) => Number(s) >= 500)
  .reduce((n, [, c]) => n + c, 0)
console.log(
  `\nAPI fuzz, seed ${SEED}: ${stats.requests} requests over ${plan.targets.length} routes (${runsPerRoute} each) in ${seconds.toFixed(1)} s (${(stats.requests / seconds).toFixed(0)} req/s), ${stats.readBacks} read-backs of accepted writes, ${stats.runsStopped} planner runs stopped`,
)
console.table(
  Object.fromEntries(
    Object.entries(stats.byStatus)
      .sort()
      .map(([s, n]) => [s, { requests: n }]),
  ),
)
console.log(
  `5xx answers: ${fivexx} (must be 0); other failed checks: ${stats.failures.length - stats.failures.filter((f) => f.status >= 500).length}; sessions lost: ${stats.sessionsRenewed.length}`,
)
for (const f of stats.failures.slice(0, 20)) console.log(`  ✗ ${f.key} as ${f.who}: ${f.problem}\n      ${f.url.slice(0, 160)}  [${f.mutation.slice(0, 120)}]`)

server.close()
await pool.end()
stop()
process.exit(stats.failures.length || stats.sessionsRenewed.length ? 1 : 0)
