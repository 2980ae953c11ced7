// `npm run benchmark:board`: board data for a four-week window with 1,200 planned operations under autocannon (10 and 50
// connections), and how fast a change reaches a second connected client. Prints figures; asserts nothing.
import autocannon from 'autocannon'
import { io as connect } from 'socket.io-client'
import { and, eq, sql } from 'drizzle-orm'
import { createDb } from '../server/db/client'
import * as s from '../server/db/schema/index'
import { dayjs } from '../server/lib/time'
import { addPlannedLoad, benchServer } from './benchmark-common'

const TARGET_OPS = Number(process.env.BOARD_OPS ?? 1400)
const bench = await benchServer('millgrain_bench_board')
const { url, server } = bench

const from = dayjs().tz('Europe/London').startOf('isoWeek')
const to = from.add(27, 'day')
await addPlannedLoad(url, TARGET_OPS, from)

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
  const res = await autocannon({
    url: server.url + path,
    connections,
    duration: 10,
    workers: 1,
    headers: { cookie: manager.cookie, 'accept-encoding': 'gzip' },
  })
  // autocannon reports p97.5, not p95; p95 is at most that.
  const row = {
    connections,
    p50: res.latency.p50,
    p97_5: res.latency.p97_5,
    p99: res.latency.p99,
    reqPerSec: res.requests.average,
    errors: res.errors + res.non2xx + res.timeouts,
  }
  results.push(row)
}
console.log('\nGET /api/board (four weeks, ~1,200 bars), autocannon 10 s per row')
console.table(results)

// Change latency: the manager pins/unpins a bar; the sales board receives plan:changed.
const sock = connect(server.url, { extraHeaders: { cookie: sales.cookie }, transports: ['websocket'] })
await new Promise<void>((res) => sock.on('connect', () => res()))
const { db: db2, pool: pool2 } = createDb(url, 2)
const [op] = await db2
  .select()
  .from(s.operations)
  .where(and(eq(s.operations.status, 'pending'), sql`planned_start is not null`))
  .limit(1)
let version = op!.version
const lat: number[] = []
for (let k = 0; k < 40; k++) {
  const got = new Promise<number>((res) => sock.once('plan:changed', () => res(performance.now())))
  const t = performance.now()
  const r = await fetch(`${server.url}/api/board/operations/${op!.id}`, {
    method: 'PATCH',
    headers: { 'content-type': 'application/json', cookie: manager.cookie, 'x-csrf-token': manager.csrf },
    body: JSON.stringify({ pinned: k % 2 === 0, version }),
  })
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
