// `npm run benchmark:sockets`: 200 Socket.IO clients on a few signed-in sessions receive plan moves (50 pin/unpin by the
// manager) and bench transitions (claim/release by the setter). Prints delivery latency p50/p95/max and lost events
// (must be 0: every client must receive every event, counted by seq). Clients run in this process, beside the server.
import { sql } from 'drizzle-orm'
import { io as connect, type Socket } from 'socket.io-client'
import { allRoutes } from '../server/routes/index'
import { DEMO_EMAIL } from '../tests/setup/app'
import { benchServer, pct, type HttpSession } from './benchmark-common'

const CLIENTS = Number(process.env.SOCKET_CLIENTS ?? 200)
const MOVES = Number(process.env.SOCKET_MOVES ?? 50)
const TRANSITIONS = Number(process.env.SOCKET_TRANSITIONS ?? 20)
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- raw SQL rows; the benchmark reads the columns its queries name
const rowsOf = (r: unknown) => (r as { rows: any[] }).rows
const TRACKED = ['plan:changed', 'operation:changed', 'jobBag:changed'] as const

const b = await benchServer('millgrain_bench_sockets')
const manager = await b.signIn(DEMO_EMAIL.manager)
const setter = await b.signIn(DEMO_EMAIL.bench)
await b.publishPlan(manager)

// A dozen sessions of every role, shared round-robin by the clients (tablets, office screens, phones).
const emails = [
  DEMO_EMAIL.owner,
  DEMO_EMAIL.manager,
  DEMO_EMAIL.sales,
  DEMO_EMAIL.sales,
  DEMO_EMAIL.bench,
  'priya@wrenfield.test',
  'jonah@wrenfield.test',
  'ruth@wrenfield.test',
  'trainee@wrenfield.test',
  DEMO_EMAIL.manager,
  DEMO_EMAIL.sales,
  DEMO_EMAIL.owner,
]
const sessions: HttpSession[] = []
for (const e of emails) sessions.push(await b.signIn(e))

interface Client {
  sock: Socket
  seqs: Set<number>
  at: Map<number, number>
}
const clients: Client[] = []
const t0c = performance.now()
await Promise.all(
  Array.from(
    { length: CLIENTS },
    (_, i) =>
      new Promise<void>((res, rej) => {
        const sock = connect(b.server.url, {
          extraHeaders: { cookie: sessions[i % sessions.length]!.cookie },
          transports: ['websocket'],
          forceNew: true,
          reconnection: false,
        })
        const c: Client = { sock, seqs: new Set(), at: new Map() }
        for (const ev of TRACKED)
          sock.on(ev, (p: { seq: number }) => {
            c.seqs.add(p.seq)
            c.at.set(p.seq, performance.now())
          })
        sock.once('connect', () => res())
        sock.once('connect_error', rej)
        clients.push(c)
      }),
  ),
)
console.log(`${CLIENTS} clients connected over ${sessions.length} sessions in ${(performance.now() - t0c).toFixed(0)} ms`)

const [op] = rowsOf(
  await b.server.db.execute(sql`select id, version from operations where planned_start is not null and status in ('pending', 'ready') order by id limit 1`),
)
const triggers: { kind: string; t: number; seqs: number[] }[] = []
/** Waits until every client has an event for which `match` holds that arrived after the trigger, or 5 s. */
async function allHeard(since: number, count: number) {
  const deadline = performance.now() + 5000
  while (performance.now() < deadline) {
    if (clients.every((c) => [...c.at.values()].filter((t) => t >= since).length >= count)) return
    await new Promise((r) => setTimeout(r, 5))
  }
}

let version = op.version as number
for (let k = 0; k < MOVES; k++) {
  const t = performance.now()
  const r = await b.call(manager, 'PATCH', `/board/operations/${op.id}`, { pinned: k % 2 === 0, version })
  if (r.status !== 200) throw new Error(`move ${k}: ${r.status} ${JSON.stringify(r.body)}`)
  version = r.body.version
  triggers.push({ kind: 'plan move (pin/unpin)', t, seqs: [] })
  await allHeard(t, 1)
}

const notes: string[] = []
if (allRoutes.some((r) => r.path === '/bench/operations/:id/claim')) {
  // A ready stone-setting step and the setting bench; claim and release it in turn (each: operation:changed, jobBag:changed).
  const [bench] = rowsOf(await b.server.db.execute(sql`select id from benches where name = 'Setting bench A'`))
  const [step] = rowsOf(
    await b.server.db
      .execute(sql`select o.id, o.job_bag_id, o.after from operations o join operation_kinds k on k.id = o.kind_id join job_bags jb on jb.id = o.job_bag_id join orders ord on ord.id = jb.order_id
    where k.code = 'setting' and ord.status = 'open' and o.status in ('pending', 'ready') order by ord.due_date, o.seq limit 1`),
  )
  await b.server.db.execute(
    sql`update operations set status = 'done', finished_at = now() where job_bag_id = ${step.job_bag_id} and key in (select jsonb_array_elements_text(${JSON.stringify(step.after)}::jsonb))`,
  )
  await b.server.db.execute(sql`update operations set status = 'ready', claimed_by = null where id = ${step.id}`)
  for (let k = 0; k < TRANSITIONS; k++) {
    const action = k % 2 === 0 ? 'claim' : 'release'
    const t = performance.now()
    const r = await b.call(setter, 'POST', `/bench/operations/${step.id}/${action}`, { requestId: crypto.randomUUID(), benchId: bench.id })
    if (r.status !== 200) throw new Error(`${action} ${k}: ${r.status} ${JSON.stringify(r.body)}`)
    triggers.push({ kind: `bench ${action}`, t, seqs: [] })
    await allHeard(t, 1)
  }
} else notes.push('bench transitions skipped: no bench claim route yet')
await new Promise((r) => setTimeout(r, 1000))

// Every event any client saw (by seq) must have reached every client.
const all = new Set<number>()
for (const c of clients) for (const s of c.seqs) all.add(s)
const lost = clients.reduce((n, c) => n + [...all].filter((s) => !c.seqs.has(s)).length, 0)
// Latency: from the trigger's request to the arrival of the first event after it, per client.
const lat: number[] = []
const starts = triggers.map((x) => x.t)
for (const c of clients) {
  for (const [i, t] of starts.entries()) {
    const next = starts[i + 1] ?? Infinity
    const arrivals = [...c.at.values()].filter((a) => a >= t && a < next)
    if (arrivals.length) lat.push(Math.min(...arrivals) - t)
  }
}
lat.sort((x, y) => x - y)
console.log(
  `\nSocket delivery: ${CLIENTS} clients, ${triggers.length} triggers (${MOVES} plan moves${notes.length ? '' : `, ${TRANSITIONS} bench transitions`}), ${all.size} distinct events`,
)
console.table([
  {
    clients: CLIENTS,
    events: all.size,
    deliveries: clients.reduce((n, c) => n + c.seqs.size, 0),
    'p50 ms': +pct(lat, 0.5).toFixed(1),
    'p95 ms': +pct(lat, 0.95).toFixed(1),
    'max ms': +(lat[lat.length - 1] ?? NaN).toFixed(1),
    lost,
  },
])
for (const n of notes) console.log(`note: ${n}`)
for (const c of clients) c.sock.close()
await b.stop()
process.exit(lost ? 1 : 0)
