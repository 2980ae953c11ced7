// Who hears what over Socket.IO: no connection without a session; bench users hear their workshop's work but not the
// planners' drafts and progress; another workshop hears nothing of this one, whatever it emits; and a connection
// stops hearing anything once its session ends or its user is switched off.
import { and, asc, eq, inArray, isNotNull, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO_PASSWORD } from '../../server/db/seed'
import { hashPassword } from '../../server/services/users'
import { DEMO_EMAIL, startTestServer } from '../setup/app'
import { addWorkshop, unplanOpenSteps } from '../setup/fixtures'

type Srv = Awaited<ReturnType<typeof startTestServer>>
let srv: Srv
const open: Socket[] = []

beforeAll(async () => {
  // Check open connections against the session store every half second (30 s in production) so expiry is seen quickly.
  srv = await startTestServer({ SOCKET_SESSION_SWEEP_MS: '500' })
  // A published plan, so the manager has bars to pin and unpin.
  const manager = await signIn(DEMO_EMAIL.manager)
  const run = (await (await api(manager, 'POST', '/plans/runs', { timeLimitSeconds: 1 })).json()) as { id: string }
  let state: { status: string; planId: number | null }
  do {
    await new Promise((r) => setTimeout(r, 200))
    state = (await (await api(manager, 'GET', `/plans/runs/${run.id}`)).json()) as typeof state
  } while (state.status === 'running')
  expect(state.status).toBe('done')
  expect((await api(manager, 'POST', `/plans/${state.planId}/publish`)).status).toBe(200)
}, 60_000)
afterAll(async () => {
  for (const s of open) s.close()
  await srv?.stop()
})

async function signIn(email: string, password = DEMO_PASSWORD) {
  let cookie = ''
  const keep = (r: Response) => {
    const c = r.headers.get('set-cookie')
    if (c) cookie = c.split(';')[0]!
  }
  const a = await fetch(`${srv.url}/api/session`)
  keep(a)
  const { csrfToken } = (await a.json()) as { csrfToken: string }
  const b = await fetch(`${srv.url}/api/session`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie },
    body: JSON.stringify({ email, password }),
  })
  keep(b)
  const body = (await b.json()) as { csrfToken: string; user: { id: number } }
  expect(b.status, JSON.stringify(body)).toBe(200)
  return { cookie, csrf: body.csrfToken, userId: body.user.id }
}
type Session = Awaited<ReturnType<typeof signIn>>

function api(s: Session, method: string, path: string, body?: unknown) {
  return fetch(`${srv.url}/api${path}`, {
    method,
    headers: { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.csrf },
    body: body === undefined ? undefined : JSON.stringify(body),
  })
}

/** A connected socket that records every event it hears. */
async function listen(s: Session | null) {
  const sock = connect(srv.url, { extraHeaders: s ? { cookie: s.cookie } : {}, transports: ['websocket'], reconnection: false })
  open.push(sock)
  const heard: { event: string; payload: any }[] = []
  sock.onAny((event, payload) => heard.push({ event, payload }))
  await new Promise<void>((res, rej) => {
    sock.on('connect', () => res())
    sock.on('connect_error', rej)
  })
  return { sock, heard }
}

const since = (sock: Socket, seq: unknown) => new Promise<{ event: string }[]>((res) => sock.emit('changes:since' as any, seq, res))
const until = (sock: Socket, event: string, timeoutMs = 20_000) =>
  new Promise<any>((res, rej) => {
    const t = setTimeout(() => rej(new Error(`no ${event} within ${timeoutMs} ms`)), timeoutMs)
    sock.once(event, (p: unknown) => {
      clearTimeout(t)
      res(p)
    })
  })

/** A step of the demo data's live plan the manager may pin and unpin (plan:changed to the whole workshop). */
async function plannedOperation(): Promise<{ id: number; version: number }> {
  const o = s.operations
  const [op] = await srv.db
    .select({ id: o.id, version: o.version })
    .from(o)
    .where(and(inArray(o.status, ['pending', 'ready']), isNotNull(o.plannedStart)))
    .orderBy(asc(o.id))
    .limit(1)
  return op!
}

let pinVersion: number | null = null
async function pinToggle(manager: Session, pinned: boolean) {
  const op = await plannedOperation()
  const r = await api(manager, 'PATCH', `/board/operations/${op.id}`, { pinned, version: pinVersion ?? op.version })
  const body = (await r.json()) as { version: number }
  expect(r.status, JSON.stringify(body)).toBe(200)
  pinVersion = body.version
  return op.id
}

describe('signing in to the live channel', () => {
  it('when a connection has no session, or a made-up cookie, then it is refused', async () => {
    await expect(listen(null)).rejects.toThrow(/not signed in/)
    await expect(listen({ cookie: 'millgrain.sid=s%3Aforged.signature', csrf: '', userId: 0 })).rejects.toThrow(/not signed in/)
  })
})

describe('one workshop, several roles', () => {
  it('when the manager plans and moves bars, then a bench user hears the moves and step changes but no draft or planner progress, live or on catch-up', async () => {
    const manager = await signIn(DEMO_EMAIL.manager)
    const bench = await signIn(DEMO_EMAIL.bench)
    const m = await listen(manager)
    const b = await listen(bench)
    // A forged request to join the planners' room does nothing: rooms come from the session only.
    for (const ev of ['join', 'subscribe', 'room:join', 'workshop:join']) b.sock.emit(ev as any, 'workshop:1:planners')

    // The planner offers a draft only when it beats the live plan: empty the live plan's bars that are not pinned.
    await unplanOpenSteps(srv.db)
    const drafted = until(m.sock, 'plan:drafted')
    const run = await api(manager, 'POST', '/plans/runs', { timeLimitSeconds: 1 })
    expect(run.status).toBe(202)
    const draft = (await drafted) as { id: number }
    // Publish it, so the bars are back on the live plan for the rest of this file.
    expect((await api(manager, 'POST', `/plans/${draft.id}/publish`)).status).toBe(200)
    expect(
      m.heard.some((e) => e.event === 'plan:progress'),
      'the manager hears planner progress',
    ).toBe(true)

    const changed = until(b.sock, 'plan:changed')
    const opId = await pinToggle(manager, true)
    expect(await changed).toMatchObject({ operationId: opId, seq: expect.any(Number) })

    // A step change through the job bag API reaches the bench as operation:changed.
    const o = s.operations
    const step = (
      await srv.db
        .select({ id: o.id, version: o.version, job_bag_id: o.jobBagId })
        .from(o)
        .innerJoin(s.jobBags, eq(s.jobBags.id, o.jobBagId))
        .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
        .where(and(eq(s.orders.status, 'open'), eq(o.status, 'pending')))
        .orderBy(asc(o.id))
        .limit(1)
    )[0]!
    const opChanged = until(b.sock, 'operation:changed')
    const patch = await api(manager, 'PATCH', `/job-bags/${step.job_bag_id}/operations/${step.id}`, { name: 'Polish again, gently', version: step.version })
    expect(patch.status).toBe(200)
    expect(await opChanged).toMatchObject({ id: step.id })

    const benchEvents = b.heard.map((e) => e.event)
    expect(benchEvents).not.toContain('plan:drafted')
    expect(benchEvents).not.toContain('plan:progress')
    const caughtUp = (await since(b.sock, 0)).map((e) => e.event)
    expect(caughtUp).toContain('plan:changed')
    expect(caughtUp).toContain('operation:changed')
    expect(caughtUp).not.toContain('plan:drafted')
    expect(caughtUp).not.toContain('plan:discarded')
    expect((await since(m.sock, 0)).map((e) => e.event)).toContain('plan:drafted')
    m.sock.close()
    b.sock.close()
  })
})

describe('a second workshop', () => {
  it("when a user of another workshop is connected, then they never hear the first workshop's events, live, on catch-up or by asking for its rooms", async () => {
    const passwordHash = await hashPassword('other-bench-password')
    await addWorkshop(srv.db, {
      name: 'Harrowgate Lane Bench',
      users: [
        { email: 'maker@harrowgate.test', name: 'Other Maker', role: 'bench', passwordHash },
        { email: 'boss@harrowgate.test', name: 'Other Boss', role: 'owner', passwordHash },
      ],
    })
    const first = (await srv.db.select({ id: s.workshops.id }).from(s.workshops).where(eq(s.workshops.name, 'Wrenfield Street Workshop')))[0]!

    const manager = await signIn(DEMO_EMAIL.manager)
    const sales = await listen(await signIn(DEMO_EMAIL.sales))
    const otherBench = await listen(await signIn('maker@harrowgate.test', 'other-bench-password'))
    const otherOwner = await listen(await signIn('boss@harrowgate.test', 'other-bench-password'))
    for (const o of [otherBench, otherOwner]) {
      for (const ev of ['join', 'subscribe', 'room:join'])
        for (const room of [`workshop:${first.id}`, `workshop:${first.id}:planners`, first.id]) o.sock.emit(ev as any, room)
      o.sock.emit('changes:since' as any, { workshopId: first.id, seq: 0 }, () => {})
    }
    // Events of the first workshop: a move (to everyone there) and a draft (to its planners); sales of the first workshop is the barrier.
    const heard = until(sales.sock, 'plan:changed')
    await pinToggle(manager, false)
    await heard
    const drafted = await api(manager, 'POST', '/plans/runs', { timeLimitSeconds: 1 })
    expect([202, 409]).toContain(drafted.status)
    await new Promise((r) => setTimeout(r, 2500))
    const heardAgain = until(sales.sock, 'plan:changed')
    await pinToggle(manager, true)
    await heardAgain

    for (const o of [otherBench, otherOwner]) {
      expect(o.heard, JSON.stringify(o.heard.slice(0, 3))).toEqual([])
      for (const seq of [0, -1, '0', null, 'NaN', { workshopId: first.id }, -Infinity]) expect(await since(o.sock, seq)).toEqual([])
    }
    for (const s of [sales, otherBench, otherOwner]) s.sock.close()
  })
})

describe('when a session ends', () => {
  it('when a user signs out, then their open connection is closed and hears nothing more', async () => {
    const manager = await signIn(DEMO_EMAIL.manager)
    const m = await listen(manager)
    const salesSession = await signIn(DEMO_EMAIL.sales)
    const s = await listen(salesSession)
    const closed = new Promise<string>((res) => s.sock.on('disconnect', (reason) => res(reason)))
    const out = await api(salesSession, 'DELETE', '/session')
    expect(out.status).toBe(200)
    expect(await closed).toBe('io server disconnect')
    const count = s.heard.length
    const barrier = until(m.sock, 'plan:changed')
    await pinToggle(manager, false)
    await barrier
    expect(s.heard.length).toBe(count)
    // Reconnecting with the old cookie is refused: the session is gone.
    await expect(listen(salesSession)).rejects.toThrow(/not signed in/)
    m.sock.close()
  })

  it("when the owner switches a bench user off, then that user's open connections are closed and cannot come back", async () => {
    const owner = await signIn(DEMO_EMAIL.owner)
    const manager = await signIn(DEMO_EMAIL.manager)
    const m = await listen(manager)
    const priya = await signIn('priya@wrenfield.test')
    const tablet = await listen(priya)
    const phone = await listen(await signIn('priya@wrenfield.test'))
    const closedBoth = Promise.all([tablet, phone].map((c) => new Promise<string>((res) => c.sock.on('disconnect', (reason) => res(reason)))))
    const users = (await (await api(owner, 'GET', '/users')).json()) as { id: number; version: number; email: string }[]
    const u = users.find((x) => x.email === 'priya@wrenfield.test')!
    const off = await api(owner, 'PATCH', `/users/${u.id}`, { active: false, version: u.version })
    expect(off.status).toBe(200)
    expect(await closedBoth).toEqual(['io server disconnect', 'io server disconnect'])
    const barrier = until(m.sock, 'plan:changed')
    await pinToggle(manager, true)
    await barrier
    expect(tablet.heard.filter((e) => e.event === 'plan:changed')).toEqual([])
    // The user cache of signed-in users lives 2 s at most; after that the old session no longer reconnects.
    await expect(listen(priya)).rejects.toThrow(/not signed in/)
    m.sock.close()
  })

  it('when a session disappears from the store without a request here (expiry), then the sweep closes its connection', async () => {
    const session = await signIn(DEMO_EMAIL.sales)
    const c = await listen(session)
    const closed = new Promise<string>((res) => c.sock.on('disconnect', (reason) => res(reason)))
    // Raw SQL on purpose: the session table belongs to connect-pg-simple, not to our schema.
    await srv.db.execute(sql`delete from user_sessions where (sess->'passport'->>'user')::int = ${session.userId}`)
    expect(await closed).toBe('io server disconnect')
  }, 20_000)
})
