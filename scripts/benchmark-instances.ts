// `npm run benchmark:instances`: 1, 2 and 4 app processes over one PostgreSQL behind the sticky proxy of start:cluster.
// Board throughput: autocannon through the proxy (50 connections, 10 s; requests without the instance cookie are dealt
// round the instances, as many browsers would be). Change latency: a bar pinned through instance a, heard by a client
// connected to instance b (a itself when there is one instance), 40 times. Prints figures; asserts nothing.
// Scratch cluster by default; `--durable` (BENCH_DURABLE=1) for the fsync-on cluster set up as `npm start`'s.
import { loadavg } from 'node:os'
import autocannon from 'autocannon'
import { io as connect } from 'socket.io-client'
import { DEMO_PASSWORD } from '../server/db/seed'
import { dayjs } from '../server/lib/time'
import { addPlannedLoad, pct } from './benchmark-common'
import { startProxy } from './cluster-proxy'
import { instanceName, spawnInstance } from './instance-process'
import { scratchDatabase } from './scratch-db'

const COUNTS = (process.env.BENCH_INSTANCES ?? '1,2,4').split(',').map(Number)
const DURATION = Number(process.env.BENCH_SECONDS ?? 10)
const CONNECTIONS = 50
const CHANGES = 40

const { url, stop } = await scratchDatabase('millgrain_bench_instances')
const from = dayjs().tz('Europe/London').startOf('isoWeek')
const to = from.add(27, 'day')
await addPlannedLoad(url, Number(process.env.BOARD_OPS ?? 1400), from)
const path = `/api/board?from=${from.format('YYYY-MM-DD')}&to=${to.format('YYYY-MM-DD')}`
const env = { DATABASE_URL: url, SESSION_SECRET: 'bench-secret-bench-secret', NODE_ENV: 'production', LOGIN_ATTEMPTS_PER_15_MIN: '100000' }

async function signIn(base: string, email: string) {
  let cookie = ''
  const keep = (r: Response) => {
    const c = r.headers.getSetCookie().find((x) => x.startsWith('millgrain.sid='))
    if (c) cookie = c.split(';')[0]!
  }
  const a = await fetch(`${base}/api/session`)
  keep(a)
  const { csrfToken } = (await a.json()) as { csrfToken: string }
  const b = await fetch(`${base}/api/session`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie },
    body: JSON.stringify({ email, password: DEMO_PASSWORD }),
  })
  keep(b)
  if (b.status !== 200) throw new Error(`sign-in ${email}: ${b.status}`)
  return { cookie, csrf: ((await b.json()) as { csrfToken: string }).csrfToken }
}

const rows: Record<string, unknown>[] = []
// The first row: one instance without the proxy, to show what the proxy itself costs.
const runs = [{ n: 1, direct: true }, ...COUNTS.map((n) => ({ n, direct: false }))]
for (const { n, direct } of runs) {
  console.log(`[bench] ${n} instance${n === 1 ? '' : 's'}${direct ? ', no proxy' : ''}…`)
  const instances = await Promise.all(Array.from({ length: n }, (_, i) => spawnInstance(instanceName(i), env)))
  const proxy = await startProxy({ port: 0, targets: instances.map((i) => i.url) })
  const front = direct ? instances[0]!.url : proxy.url
  const load0 = loadavg()[0]!
  try {
    const manager = await signIn(proxy.url, 'manager@wrenfield.test')
    const sales = await signIn(proxy.url, 'sales@wrenfield.test')
    // Every instance answers once before measuring, so each has the board in its cache.
    for (const inst of instances) await (await fetch(inst.url + path, { headers: { cookie: manager.cookie } })).arrayBuffer()
    const res = await autocannon({
      url: front + path,
      connections: CONNECTIONS,
      duration: DURATION,
      workers: 1,
      headers: { cookie: manager.cookie, 'accept-encoding': 'gzip' },
    })

    // Change latency across instances.
    const a = instances[0]!
    const b = instances[Math.min(1, n - 1)]!
    const sock = connect(b.url, { extraHeaders: { cookie: sales.cookie }, transports: ['websocket'] })
    await new Promise<void>((res, rej) => {
      sock.on('connect', () => res())
      sock.on('connect_error', rej)
    })
    const { Client } = (await import('pg')).default
    const pg = new Client({ connectionString: url })
    await pg.connect()
    const {
      rows: [op],
    } = await pg.query(`select id, version, pinned from operations where status = 'pending' and planned_start is not null order by id limit 1`)
    await pg.end()
    let version = op.version as number
    let pinned = op.pinned as boolean
    const lat: number[] = []
    for (let k = 0; k < CHANGES; k++) {
      const got = new Promise<number>((res) => sock.once('plan:changed', () => res(performance.now())))
      const t = performance.now()
      pinned = !pinned
      const r = await fetch(`${a.url}/api/board/operations/${op.id}`, {
        method: 'PATCH',
        headers: { 'content-type': 'application/json', cookie: manager.cookie, 'x-csrf-token': manager.csrf },
        body: JSON.stringify({ pinned, version }),
      })
      if (r.status !== 200) throw new Error(`pin: ${r.status} ${await r.text()}`)
      version = ((await r.json()) as { version: number }).version
      lat.push((await got) - t)
    }
    sock.close()
    lat.sort((x, y) => x - y)
    rows.push({
      instances: direct ? `${n} (no proxy)` : n,
      'board req/s': Math.round(res.requests.average),
      'board p50 ms': res.latency.p50,
      'board p97.5 ms': res.latency.p97_5,
      errors: res.errors + res.non2xx + res.timeouts,
      'change p50 ms': +pct(lat, 0.5).toFixed(1),
      'change p95 ms': +pct(lat, 0.95).toFixed(1),
      path: n === 1 ? 'a → a' : 'a → b',
      'load avg': `${load0.toFixed(1)}–${loadavg()[0]!.toFixed(1)}`,
    })
  } finally {
    await proxy.close()
    await Promise.all(instances.map((i) => i.kill('SIGTERM')))
  }
}
console.log(
  `\nGET /api/board (four weeks, ~1,200 bars) through the proxy, autocannon ${CONNECTIONS} connections × ${DURATION} s; change = PATCH pin on a → plan:changed on a client of b (${CHANGES} times)`,
)
console.table(rows)
stop()
