// Property-based fuzzing of every JSON API route (seeded, small sample): hostile payloads, path params and query strings
// never cause a 5xx, errors are well-formed, and accepted injection strings are stored and returned literally.
import { createServer, type Server } from 'node:http'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { allRoutes } from '../../server/routes/index'
import { count } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type TestApp } from '../setup/app'
import { routingId } from '../setup/fixtures'
import { startPayFake, type PayFake } from '../../server/dev/pay-fake'
import { fuzzRoutes, loadIdPools, makeSessions, planTargets, printPlan, type FuzzStats } from './fuzz/runner'
import { INJECTIONS, UNICODE } from './fuzz/values'

const RUNS_PER_ROUTE = Number(process.env.FUZZ_RUNS ?? 20)
const SEED = Number(process.env.FUZZ_SEED ?? 20260611)

let t: TestApp
let server: Server
// Payment routes reach the local test provider, as they do under `npm start`.
let fake: PayFake
beforeAll(async () => {
  fake = await startPayFake()
  t = await createTestApp({ PAY_FAKE_URL: fake.url })
  server = createServer(t.app)
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()))
})
afterAll(async () => {
  await new Promise<void>((r) => (server ? server.close(() => r()) : r()))
  await fake?.close()
  await t?.close()
})

describe('fuzzing every route', () => {
  it('when the route list is planned, then only sign-out, what changes the agent’s own session and multipart uploads are left out, each with its reason', () => {
    const plan = printPlanQuiet()
    expect(plan.excluded.map((e) => e.key).sort()).toEqual(
      allRoutes
        .filter(
          (r) =>
            ['delete /session', 'delete /session/everywhere', 'post /bench-station'].includes(`${r.method} ${r.path}`) ||
            (r.method === 'post' && /multipart|upload/i.test(r.summary)),
        )
        .map((r) => `${r.method.toUpperCase()} ${r.path}`)
        .sort(),
    )
    expect(plan.targets.length + plan.excluded.length).toBe(allRoutes.length)
  })

  it(`when every route gets ${RUNS_PER_ROUTE} seeded hostile requests from its roles, then none answers 5xx, every 4xx says what is wrong and every 400 names a field`, async () => {
    const plan = planTargets(allRoutes)
    printPlan(plan)
    const sessions = await makeSessions(server)
    const pools = await loadIdPools(t.db)
    const stats: FuzzStats = await fuzzRoutes({ routes: allRoutes, sessions, pools, runsPerRoute: RUNS_PER_ROUTE, seed: SEED }, plan)
    console.log(
      `fuzz: ${stats.requests} requests, statuses ${JSON.stringify(stats.byStatus)}, ${stats.readBacks} read-backs, ${stats.runsStopped} planner runs stopped`,
    )
    if (process.env.FUZZ_VERBOSE) for (const [k, v] of Object.entries(stats.byRoute)) console.log(`${k.padEnd(50)} ${JSON.stringify(v)}`)
    expect(stats.failures, JSON.stringify(stats.failures.slice(0, 15), null, 1)).toEqual([])
    expect(stats.sessionsRenewed, "no fuzzed request may end a fuzzing agent's session").toEqual([])
    // The sample reaches past validation on most routes: at least one 2xx overall per method family.
    expect(Object.keys(stats.byStatus).some((s) => s.startsWith('2'))).toBe(true)
  }, 180_000)
})

function printPlanQuiet() {
  return planTargets(allRoutes)
}

describe('injection strings are data', () => {
  const hostile = [...INJECTIONS, ...UNICODE.filter((s) => s.trim() && !s.includes('\u0000') && (s as unknown as { isWellFormed(): boolean }).isWellFormed())]

  it('when customers and orders are named with SQL, HTML and Unicode tricks, then they are stored and returned literally, and searching for them finds them', async () => {
    const sales = await signedIn(t.app, 'sales')
    const routing = { id: await routingId(t.db) }
    for (const text of hostile) {
      const c = await sales.post('/api/customers', { name: text, notes: text })
      expect(c.status, `${JSON.stringify(text)} → ${c.status} ${JSON.stringify(c.body)}`).toBe(201)
      const back = await sales.get(`/api/customers/${c.body.id}`)
      expect(back.body.name).toBe(text.trim())
      expect(back.body.notes).toBe(text)
      const o = await sales.post('/api/orders', {
        customerId: c.body.id,
        title: text,
        dueDate: '2030-05-01',
        pieces: [{ routingId: routing.id, piece: text }],
      })
      expect(o.status, JSON.stringify(o.body)).toBe(201)
      const ob = await sales.get(`/api/orders/${o.body.id}`)
      expect(ob.body.title).toBe(text.trim())
      expect(ob.body.customerName ?? ob.body.customer?.name).toBe(text.trim())
      const found = await sales.get(`/api/customers?q=${encodeURIComponent(text.trim().slice(0, 100))}`)
      expect(found.status).toBe(200)
      expect(found.body.items.map((x: { id: number }) => x.id)).toContain(c.body.id)
    }
    // The tables the strings talked about are all still there.
    const n = { orders: (await t.db.select({ n: count() }).from(s.orders))[0]!.n, customers: (await t.db.select({ n: count() }).from(s.customers))[0]!.n }
    expect(n.orders).toBeGreaterThan(30)
    expect(n.customers).toBeGreaterThan(hostile.length)
  })

  it('when a name holds a NUL character or a lone surrogate, then the answer is a 400 naming that field, not a silent change', async () => {
    const sales = await signedIn(t.app, 'sales')
    for (const text of ['a\u0000b', '\ud800', 'x\udc00y']) {
      const r = await sales.post('/api/customers', { name: text })
      expect(r.status, JSON.stringify(r.body)).toBe(400)
      expect(Object.keys(r.body.fields)).toContain('name')
    }
  })
})
