// `npm run benchmark:load`: autocannon against the real server on loopback with the demo data and a published plan —
// board data, the bench's "next for me", the order list and a promise check — at 10 and 50 connections.
// Prints p50/p95/p99 latency, requests/s and errors (must be 0; non-2xx answers count as errors). Asserts nothing else.
import autocannon from 'autocannon'
import { allRoutes } from '../server/routes/index'
import { dayjs } from '../server/lib/time'
import { DEMO_EMAIL } from '../tests/setup/app'
import { benchServer, pct } from './benchmark-common'

const DURATION = Number(process.env.LOAD_SECONDS ?? 10)
const b = await benchServer('millgrain_bench_load')
const manager = await b.signIn(DEMO_EMAIL.manager)
const setter = await b.signIn(DEMO_EMAIL.bench)
const sales = await b.signIn(DEMO_EMAIL.sales)
await b.publishPlan(manager)

const has = (method: string, path: string) => allRoutes.some((r) => r.method === method && r.path === path)
const from = dayjs().tz('Europe/London').startOf('isoWeek')
const to = from.add(27, 'day')
const benches = (await b.call(manager, 'GET', '/benches')).body as { id: number; name: string }[]
const settingBench = benches.find((x) => /setting/i.test(x.name)) ?? benches[0]!
const routing = ((await b.call(manager, 'GET', '/routings')).body as { id: number; code: string }[])[0]!

interface Target {
  name: string
  method: 'GET' | 'POST'
  path: string
  who: { cookie: string; csrf: string }
  body?: unknown
}
const targets: Target[] = [
  { name: 'board (4 weeks)', method: 'GET', path: `/api/board?from=${from.format('YYYY-MM-DD')}&to=${to.format('YYYY-MM-DD')}`, who: manager },
]
const notes: string[] = []
if (has('get', '/bench/next')) targets.push({ name: 'bench next for me', method: 'GET', path: `/api/bench/next?benchId=${settingBench.id}`, who: setter })
else notes.push('bench "next for me" skipped: no GET /bench/next route yet')
targets.push({ name: 'order list', method: 'GET', path: '/api/orders?status=quoted,open,in-work,ready&pageSize=50', who: sales })
if (has('post', '/promise/check'))
  targets.push({
    name: 'promise check',
    method: 'POST',
    path: '/api/promise/check',
    who: sales,
    body: { routingId: routing.id, params: { metal: 'gold-18ct', stoneCount: 12, stoneSizeMm: 1.5 } },
  })
else notes.push('promise check skipped: no POST /promise/check route yet')

// One warm-up answer each, and a sanity check that the request is what we mean to measure.
for (const t of targets) {
  const r = await fetch(b.server.url + t.path, {
    method: t.method,
    headers: { cookie: t.who.cookie, 'x-csrf-token': t.who.csrf, 'content-type': 'application/json' },
    body: t.body ? JSON.stringify(t.body) : undefined,
  })
  const text = await r.text()
  console.log(`${t.name}: ${t.method} ${t.path.split('?')[0]} → ${r.status}, ${(text.length / 1024).toFixed(1)} KiB`)
  if (r.status >= 300) throw new Error(`${t.name} answers ${r.status}: ${text.slice(0, 300)}`)
}

const rows: Record<string, unknown>[] = []
for (const t of targets) {
  for (const connections of [10, 50]) {
    // Every response time is kept, so p95 is exact (autocannon's own table has p97.5, not p95).
    const times: number[] = []
    const inst = autocannon({
      url: b.server.url + t.path,
      method: t.method,
      connections,
      duration: DURATION,
      headers: { cookie: t.who.cookie, 'x-csrf-token': t.who.csrf, 'content-type': 'application/json', 'accept-encoding': 'gzip' },
      body: t.body ? JSON.stringify(t.body) : undefined,
    })
    inst.on('response', (_c: unknown, _status: number, _bytes: number, ms: number) => times.push(ms))
    // eslint-disable-next-line @typescript-eslint/no-explicit-any -- autocannon's result object, read for a few printed figures
    const res = await new Promise<any>((resolve) => inst.on('done', resolve))
    times.sort((x, y) => x - y)
    rows.push({
      endpoint: t.name,
      connections,
      'p50 ms': +pct(times, 0.5).toFixed(1),
      'p95 ms': +pct(times, 0.95).toFixed(1),
      'p99 ms': +pct(times, 0.99).toFixed(1),
      'req/s': Math.round(res.requests.average),
      requests: res.requests.total,
      errors: res.errors + res.non2xx,
      timeouts: res.timeouts,
      non2xx: res.non2xx,
    })
  }
}
console.log(
  `\nLoad on loopback, demo data with a published plan, autocannon ${DURATION} s per row (errors = socket errors incl. timeouts (10 s) + non-2xx; must be 0)`,
)
console.table(rows)
for (const n of notes) console.log(`note: ${n}`)
const errors = rows.reduce((n, r) => n + Number(r.errors), 0)
// Requests autocannon gave up on may still be running on the server: let them finish before the database goes away.
await new Promise((r) => setTimeout(r, 12_000))
await b.stop()
process.exit(errors ? 1 : 0)
