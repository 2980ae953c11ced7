// `npm run bench:board`: board data for a four-week window with 1,200 planned operations under autocannon (10 and 50
// connections), and how fast a change reaches a second connected client. Prints figures; asserts nothing.
import autocannon from 'autocannon'
import { io as connect } from 'socket.io-client'
import { and, eq, sql } from 'drizzle-orm'
import { createDb } from '../server/db/client'
import * as s from '../server/db/schema/index'
import { dayjs } from '../server/lib/time'
import { benchServer } from './bench-common'

const TARGET_OPS = Number(process.env.BOARD_OPS ?? 1400)
const bench = await benchServer('millgrain_bench_board')
const { url, server } = bench

// Grow the demo workshop to TARGET_OPS planned operations spread over four working weeks.
const { db, pool } = createDb(url, 4)
const from = dayjs().tz('Europe/London').startOf('isoWeek')
const to = from.add(27, 'day')
{
  const [w] = await db.select().from(s.workshops)
  const benches = await db.select().from(s.benches)
  const people = await db.select().from(s.people)
  const [tpl] = await db.select().from(s.routingTemplates).where(eq(s.routingTemplates.code, 'pave-pendant'))
  const steps = await db.select().from(s.templateSteps).where(eq(s.templateSteps.templateId, tpl!.id))
  const [cust] = await db.select().from(s.customers)
  let have = (await db.execute(sql`select count(*)::int n from operations where status not in ('done','skipped')`)).rows[0]!.n as number
  let i = 0
  let rnd = 7
  const r = () => ((rnd = (rnd * 48271) % 2147483647) / 2147483647)
  while (have < TARGET_OPS) {
    i++
    const [o] = await db.insert(s.orders).values({ workshopId: w!.id, number: `BB-${i}`, customerId: cust!.id, title: `Bench load ${i}`, dueDate: to.format('YYYY-MM-DD'), priority: 3 }).returning()
    const [b] = await db.insert(s.jobBags).values({ workshopId: w!.id, orderId: o!.id, number: `BB-${i}-1`, piece: 'Load piece', templateId: tpl!.id, params: { metal: 'silver-925', stoneCount: 10, stoneSizeMm: 1.5, sizeMm: 20, finish: 'polished', quantity: 1 } }).returning()
    await db.insert(s.operations).values(steps.map((st) => {
      const day = Math.floor(r() * 20)
      const start = from.add(Math.floor(day / 5) * 7 + (day % 5), 'day').hour(9).minute(Math.floor(r() * 420))
      return { jobBagId: b!.id, seq: st.seq, key: st.key, kindId: st.kindId, name: st.name, estimateMinutes: 45, after: st.after, status: 'pending',
        plannedBenchId: benches[Math.floor(r() * benches.length)]!.id, plannedPersonId: people[Math.floor(r() * people.length)]!.id,
        plannedStart: start.toISOString(), plannedEnd: start.add(45, 'minute').toISOString() }
    }))
    have += steps.length
  }
}
await pool.end()

const manager = await bench.signIn('manager@wrenfield.test')
const sales = await bench.signIn('sales@wrenfield.test')
const path = `/api/board?from=${from.format('YYYY-MM-DD')}&to=${to.format('YYYY-MM-DD')}`

const t0 = performance.now()
const first = await fetch(server.url + path, { headers: { cookie: manager.cookie } })
const body = (await first.json()) as { items: unknown[] }
const coldMs = performance.now() - t0
console.log(`\nBoard payload ${(JSON.stringify(body).length / 1024).toFixed(0)} KiB of JSON`)
console.log(`Board window ${from.format('YYYY-MM-DD')} … ${to.format('YYYY-MM-DD')}: ${body.items.length} bars; cold (uncached) answer ${coldMs.toFixed(0)} ms`)

const results: Record<string, unknown>[] = []
for (const connections of [10, 50]) {
  // The load comes from a worker thread, so the server's event loop is not also driving the load.
  const res = await autocannon({ url: server.url + path, connections, duration: 10, workers: 1, headers: { cookie: manager.cookie, 'accept-encoding': 'gzip' } })
  // autocannon reports p97.5, not p95; p95 is at most that.
  const row = { connections, p50: res.latency.p50, p97_5: res.latency.p97_5, p99: res.latency.p99, reqPerSec: res.requests.average, errors: res.errors + res.non2xx + res.timeouts }
  results.push(row)
}
console.log('\nGET /api/board (four weeks, ~1,200 bars), autocannon 10 s per row')
console.table(results)

// Change latency: the manager pins/unpins a bar; the sales board receives plan:changed.
const sock = connect(server.url, { extraHeaders: { cookie: sales.cookie }, transports: ['websocket'] })
await new Promise<void>((res) => sock.on('connect', () => res()))
const { db: db2, pool: pool2 } = createDb(url, 2)
const [op] = await db2.select().from(s.operations).where(and(eq(s.operations.status, 'pending'), sql`planned_start is not null`)).limit(1)
let version = op!.version
const lat: number[] = []
for (let k = 0; k < 40; k++) {
  const got = new Promise<number>((res) => sock.once('plan:changed', () => res(performance.now())))
  const t = performance.now()
  const r = await fetch(`${server.url}/api/board/operations/${op!.id}`, { method: 'PATCH', headers: { 'content-type': 'application/json', cookie: manager.cookie, 'x-csrf-token': manager.csrf }, body: JSON.stringify({ pinned: k % 2 === 0, version }) })
  const j = (await r.json()) as { version: number }
  version = j.version
  lat.push((await got) - t)
}
lat.sort((a, b) => a - b)
const q = (p: number) => lat[Math.min(lat.length - 1, Math.floor(p * lat.length))]!.toFixed(1)
console.log(`\nChange → second client (PATCH pin, 40 times): p50 ${q(0.5)} ms, p95 ${q(0.95)} ms, max ${lat[lat.length - 1]!.toFixed(1)} ms`)
sock.close()
await pool2.end()
await bench.stop()
