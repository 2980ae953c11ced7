// Shared set-up for the load benchmarks: the demo data on a scratch cluster with a published plan, the real server, signed-in sessions.
import { eq, sql } from 'drizzle-orm'
import { loadConfig } from '../server/config'
import { createDb } from '../server/db/client'
import * as schema from '../server/db/schema/index'
import type { Dayjs } from '../server/lib/time'
import { DEMO_PASSWORD } from '../server/db/seed'
import { startServer } from '../server/index'
import { scratchDatabase } from './scratch-db'
import { storedVatTerms } from '../shared/domain/vat'

export interface HttpSession {
  cookie: string
  csrf: string
  userId: number
}

export async function benchServer(dbName: string, o: { clientDir?: string } = {}) {
  const { url, stop } = await scratchDatabase(dbName)
  const server = await startServer(
    loadConfig({
      DATABASE_URL: url,
      PORT: '0',
      SESSION_SECRET: 'bench-secret-bench-secret',
      NODE_ENV: 'production',
      LOGIN_ATTEMPTS_PER_15_MIN: '100000',
      ...(o.clientDir ? { CLIENT_DIR: o.clientDir } : {}),
    }),
  )
  const signIn = async (email: string): Promise<HttpSession> => {
    let cookie = ''
    const keep = (r: Response) => {
      const c = r.headers.get('set-cookie')
      if (c) cookie = c.split(';')[0]!
    }
    const a = await fetch(`${server.url}/api/session`)
    keep(a)
    const { csrfToken } = (await a.json()) as { csrfToken: string }
    const b = await fetch(`${server.url}/api/session`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie },
      body: JSON.stringify({ email, password: DEMO_PASSWORD }),
    })
    keep(b)
    const body = (await b.json()) as { csrfToken: string; user: { id: number } }
    if (b.status !== 200) throw new Error(`sign-in ${email}: ${b.status}`)
    return { cookie, csrf: body.csrfToken, userId: body.user.id }
  }
  const call = async (s: HttpSession, method: string, path: string, body?: unknown) => {
    const r = await fetch(`${server.url}/api${path}`, {
      method,
      headers: { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.csrf },
      body: body === undefined ? undefined : JSON.stringify(body),
    })
    const text = await r.text()
    return { status: r.status, body: text ? JSON.parse(text) : null }
  }
  /** Runs the planner for a few seconds and publishes the draft, so the board and the bench queues have a plan. */
  const publishPlan = async (manager: HttpSession, seconds = 3) => {
    const run = await call(manager, 'POST', '/plans/runs', { timeLimitSeconds: seconds })
    if (run.status !== 202) throw new Error(`planner run: ${run.status} ${JSON.stringify(run.body)}`)
    let state: { status: string; planId: number | null }
    do {
      await new Promise((r) => setTimeout(r, 250))
      state = (await call(manager, 'GET', `/plans/runs/${run.body.id}`)).body
    } while (state.status === 'running')
    if (state.status !== 'done') throw new Error(`planner run ended ${state.status}`)
    const p = await call(manager, 'POST', `/plans/${state.planId}/publish`)
    if (p.status !== 200) throw new Error(`publish: ${p.status}`)
  }
  return {
    server,
    url,
    signIn,
    call,
    publishPlan,
    async stop() {
      await server.close()
      stop()
    },
  }
}

export const pct = (sorted: number[], p: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))]! : NaN)

/** Grows the demo workshop to `target` open operations with planned times spread over the four working weeks from `from`. */
export async function addPlannedLoad(url: string, target: number, from: Dayjs) {
  const { db, pool } = createDb(url, 4)
  const to = from.add(27, 'day')
  const [w] = await db.select().from(schema.workshops)
  const benches = await db.select().from(schema.benches)
  const people = await db.select().from(schema.people)
  const [routing] = await db.select().from(schema.routings).where(eq(schema.routings.code, 'pave-pendant'))
  const steps = await db.select().from(schema.routingSteps).where(eq(schema.routingSteps.routingId, routing!.id))
  const [cust] = await db.select().from(schema.customers)
  let have = (await db.execute(sql`select count(*)::int n from operations where status not in ('done','skipped')`)).rows[0]!.n as number
  let i = 0
  let rnd = 7
  const r = () => (rnd = (rnd * 48271) % 2147483647) / 2147483647
  while (have < target) {
    i++
    const [o] = await db
      .insert(schema.orders)
      .values({
        workshopId: w!.id,
        number: `BB-${i}`,
        customerId: cust!.id,
        title: `Bench load ${i}`,
        dueDate: to.format('YYYY-MM-DD'),
        priority: 3,
        ...storedVatTerms(w!),
      })
      .returning()
    const [b] = await db
      .insert(schema.jobBags)
      .values({
        workshopId: w!.id,
        orderId: o!.id,
        number: `BB-${i}-1`,
        piece: 'Load piece',
        routingId: routing!.id,
        params: { metal: 'silver-925', stoneCount: 10, stoneSizeMm: 1.5, sizeMm: 20, finish: 'polished', quantity: 1 },
      })
      .returning()
    await db.insert(schema.operations).values(
      steps.map((st) => {
        const day = Math.floor(r() * 20)
        const start = from
          .add(Math.floor(day / 5) * 7 + (day % 5), 'day')
          .hour(9)
          .minute(Math.floor(r() * 420))
        return {
          jobBagId: b!.id,
          seq: st.seq,
          key: st.key,
          kindId: st.kindId,
          name: st.name,
          estimateMinutes: 45,
          after: st.after,
          status: 'pending',
          plannedBenchId: benches[Math.floor(r() * benches.length)]!.id,
          plannedPersonId: people[Math.floor(r() * people.length)]!.id,
          plannedStart: start.toISOString(),
          plannedEnd: start.add(45, 'minute').toISOString(),
        }
      }),
    )
    have += steps.length
  }
  await pool.end()
}
