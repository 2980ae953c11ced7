// Two app instances (separate processes) over one PostgreSQL: live events, catch-up, caches, claims and sign-out work
// across them; and the sticky proxy of `npm run start:cluster` keeps a long-polling Socket.IO client on one instance.
import { and, asc, eq, inArray, isNotNull, max } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { publishFirstPlans } from '../../server/planning/first-plan'
import { STICKY_COOKIE } from '../../scripts/cluster-proxy'
import { httpSignIn } from '../setup/app'
import type { TestApp } from '../setup/app'
import { startInstances, type Instance, type Instances } from '../setup/instances'
import { extraSetters, freshReady, rid } from './bench-fixtures'
import { benchIdByName } from '../setup/fixtures'

let cluster: Instances
let a: Instance
let b: Instance
const open: Socket[] = []

beforeAll(async () => {
  cluster = await startInstances(2, {
    proxy: true,
    env: { SOCKET_SESSION_SWEEP_MS: '500' },
    // A live plan, so the manager has bars to pin on the board.
    prepare: async (d) => {
      await publishFirstPlans(d.db, 2)
    },
  })
  ;[a, b] = cluster.instances as [Instance, Instance]
}, 120_000)
afterAll(async () => {
  for (const s of open) s.close()
  await cluster?.stop()
}, 30_000)

type Session = Awaited<ReturnType<typeof httpSignIn>>
const api = (base: string, s: Session, method: string, path: string, body?: unknown) =>
  fetch(`${base}/api${path}`, {
    method,
    headers: { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.csrf },
    body: body === undefined ? undefined : JSON.stringify(body),
  })

async function listen(base: string, s: Session, transports: ('websocket' | 'polling')[] = ['websocket']) {
  const sock = connect(base, { extraHeaders: { cookie: s.cookie }, transports, reconnection: false })
  open.push(sock)
  const heard: { event: string; payload: any }[] = []
  sock.onAny((event, payload) => heard.push({ event, payload }))
  await new Promise<void>((res, rej) => {
    sock.on('connect', () => res())
    sock.on('connect_error', rej)
  })
  return { sock, heard }
}
const until = (sock: Socket, event: string, timeoutMs = 20_000) =>
  new Promise<any>((res, rej) => {
    const t = setTimeout(() => rej(new Error(`no ${event} within ${timeoutMs} ms`)), timeoutMs)
    sock.once(event, (p: unknown) => {
      clearTimeout(t)
      res(p)
    })
  })
const since = (sock: Socket, seq: number) => new Promise<{ seq: number; event: string; payload: any }[]>((res) => sock.emit('changes:since' as any, seq, res))

const pinnedNow = async (id: number) =>
  (await cluster.database.db.select({ pinned: s.operations.pinned }).from(s.operations).where(eq(s.operations.id, id)))[0]!.pinned

/** A planned step of the live plan that is not started and not pinned, with its version. */
async function plannedStep(): Promise<{ id: number; version: number; planned_start: string }> {
  const o = s.operations
  const [row] = await cluster.database.db
    .select({ id: o.id, version: o.version, planned_start: o.plannedStart })
    .from(o)
    .where(and(inArray(o.status, ['pending', 'ready']), isNotNull(o.plannedStart), eq(o.pinned, false)))
    .orderBy(asc(o.plannedStart), asc(o.id))
    .limit(1)
  if (!row) throw new Error('the first plan left no planned step to pin')
  return { ...row, planned_start: row.planned_start! }
}
const pin = (base: string, s: Session, step: { id: number; version: number }, pinned: boolean) =>
  api(base, s, 'PATCH', `/board/operations/${step.id}`, { pinned, version: step.version })

describe('live events across instances', () => {
  it('when the manager pins a bar on instance A, then a planner connected to B hears it with the same number A recorded', async () => {
    const onA = await httpSignIn(a.url, 'manager')
    const onB = await httpSignIn(b.url, 'owner')
    const listener = await listen(b.url, onB)
    const step = await plannedStep()
    const heard = until(listener.sock, 'plan:changed')
    const r = await pin(a.url, onA, step, true)
    expect(r.status, await r.clone().text()).toBe(200)
    const event = await heard
    expect(event).toMatchObject({ operationId: step.id, seq: expect.any(Number) })
    // The number is the row A wrote in PostgreSQL, not a count kept by either process.
    const rows = await cluster.database.db
      .select({ seq: s.realtimeEvents.seq, event: s.realtimeEvents.event })
      .from(s.realtimeEvents)
      .where(eq(s.realtimeEvents.seq, event.seq))
    expect(rows).toEqual([{ seq: event.seq, event: 'plan:changed' }])
    const back = await pin(a.url, onA, { id: step.id, version: ((await r.json()) as { version: number }).version }, false)
    expect(back.status).toBe(200)
  })

  it('when a client on B asks changes:since after events recorded on A, then B answers them all in order, drafts left out for a bench user', async () => {
    const manager = await httpSignIn(a.url, 'manager')
    const bench = await httpSignIn(b.url, 'bench')
    const planner = await httpSignIn(b.url, 'owner')
    const benchSock = await listen(b.url, bench)
    const plannerSock = await listen(b.url, planner)
    const before = (await cluster.database.db.select({ seq: max(s.realtimeEvents.seq) }).from(s.realtimeEvents))[0]?.seq ?? 0
    // Three changes on A: pin, unpin, pin again.
    let step = await plannedStep()
    const seen: number[] = []
    for (const pinned of [true, false, true]) {
      const heard = until(benchSock.sock, 'plan:changed')
      const r = await pin(a.url, manager, step, pinned)
      expect(r.status).toBe(200)
      step = { ...step, version: ((await r.json()) as { version: number }).version }
      seen.push((await heard).seq)
    }
    const caught = await since(benchSock.sock, before)
    const mine = caught.filter((e) => e.event === 'plan:changed' && e.payload.operationId === step.id)
    expect(mine.map((e) => e.seq)).toEqual(seen)
    expect(mine.map((e) => e.payload.seq)).toEqual(seen)
    expect([...seen].sort((x, y) => x - y)).toEqual(seen)
    // Planner-only events recorded on A reach the owner's catch-up on B, never the bench user's.
    const [draftLike] = await cluster.database.db
      .select({ id: s.planVersions.id, workshopId: s.planVersions.workshopId })
      .from(s.planVersions)
      .orderBy(asc(s.planVersions.id))
      .limit(1)
    await cluster.database.db.insert(s.realtimeEvents).values({ workshopId: draftLike!.workshopId, event: 'plan:drafted', payload: { id: draftLike!.id } })
    expect((await since(benchSock.sock, before)).map((e) => e.event)).not.toContain('plan:drafted')
    expect((await since(plannerSock.sock, before)).map((e) => e.event)).toContain('plan:drafted')
    await pin(a.url, manager, step, false)
  })
})

describe('caches across instances', () => {
  it('when B has the board cached and A pins a bar, then the next board from B already shows it pinned', async () => {
    const onA = await httpSignIn(a.url, 'manager')
    const onB = await httpSignIn(b.url, 'manager')
    const step = await plannedStep()
    const day = new Date(step.planned_start).toISOString().slice(0, 10)
    const board = async () => {
      const r = await api(b.url, onB, 'GET', `/board?from=${day}&to=${day}`)
      expect(r.status).toBe(200)
      const body = (await r.json()) as { items: { id: number; pinned: boolean }[] }
      return body.items.find((i) => i.id === step.id)
    }
    expect(await board()).toMatchObject({ pinned: false })
    expect(await board()).toMatchObject({ pinned: false })
    // A's answer comes after its change event is recorded; B's very next read must not be the cached board.
    const r = await pin(a.url, onA, step, true)
    expect(r.status).toBe(200)
    expect(await board()).toMatchObject({ pinned: true })
    const back = await pin(a.url, onA, { id: step.id, version: ((await r.json()) as { version: number }).version }, false)
    expect(back.status).toBe(200)
    expect(await board()).toMatchObject({ pinned: false })
  })
})

describe('claims across instances', () => {
  it('when 100 setters claim one ready step at the same moment, half through A and half through B, then exactly one wins and 99 are told who has it', async () => {
    const t = { pool: cluster.database.pool, db: cluster.database.db } as unknown as TestApp
    const viaA = await extraSetters({ ...t, app: a.url } as unknown as TestApp, 50, 'inst-a')
    const viaB = await extraSetters({ ...t, app: b.url } as unknown as TestApp, 50, 'inst-b')
    const crowd = [...viaA, ...viaB]
    const op = await freshReady(t, 'setting', 'set')
    const setA = await benchIdByName(cluster.database.db, 'Setting bench A')
    const answers = await Promise.all(crowd.map((c) => c.agent.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })))
    const ok = answers.filter((r) => r.status === 200)
    const refused = answers.filter((r) => r.status === 409)
    expect(ok).toHaveLength(1)
    expect(refused).toHaveLength(99)
    const winner = crowd.find((c) => c.personId === ok[0]!.body.operation.claimedBy)!
    for (const r of refused) expect(r.body.error).toContain(winner.name)
    const [row] = await cluster.database.db
      .select({ status: s.operations.status, claimedBy: s.operations.claimedBy })
      .from(s.operations)
      .where(eq(s.operations.id, op.id))
    expect(row).toEqual({ status: 'claimed', claimedBy: winner.personId })
  }, 120_000)
})

describe('sessions across instances', () => {
  it('when a user signs out through A, then their live connection on B is closed', async () => {
    const s = await httpSignIn(a.url, 'sales')
    const onB = await listen(b.url, s)
    const closed = new Promise<string>((res) => onB.sock.on('disconnect', (reason) => res(reason)))
    const r = await api(a.url, s, 'DELETE', '/session')
    expect(r.status).toBeLessThan(300)
    // 'io server disconnect': closed by the server (the adapter carried A's request to B), not by the network.
    expect(await closed).toBe('io server disconnect')
  })
})

describe('the sticky proxy', () => {
  it('when a client long-polls through the proxy, then every request stays on one instance and it hears a change made on the other', async () => {
    const proxyUrl = cluster.proxyUrl!
    const s = await httpSignIn(proxyUrl, 'owner')
    // Polling only: a request landing on the other instance would fail with an unknown Socket.IO session.
    const polled = await listen(proxyUrl, s, ['polling'])
    const onA = await httpSignIn(a.url, 'manager')
    const onB = await httpSignIn(b.url, 'manager')
    let step = await plannedStep()
    for (const [base, who] of [
      [a.url, onA],
      [b.url, onB],
    ] as const) {
      const heard = until(polled.sock, 'plan:changed')
      const r = await pin(base, who, step, !(await pinnedNow(step.id)))
      expect(r.status).toBe(200)
      step = { ...step, version: ((await r.json()) as { version: number }).version }
      expect(await heard).toMatchObject({ operationId: step.id })
    }
    expect(polled.sock.connected).toBe(true)
    if (await pinnedNow(step.id)) await pin(a.url, onA, step, false)
  })

  it('when a client starts with long-polling through the proxy, then it upgrades to a WebSocket through the proxy and hears a change made on another instance', async () => {
    const proxyUrl = cluster.proxyUrl!
    const s = await httpSignIn(proxyUrl, 'owner')
    const client = await listen(proxyUrl, s, ['polling', 'websocket'])
    const engine = (client.sock.io as unknown as { engine: { transport: { name: string }; once(e: string, f: () => void): void } }).engine
    if (engine.transport.name !== 'websocket') await new Promise<void>((res) => engine.once('upgrade', () => res()))
    expect(engine.transport.name).toBe('websocket')
    const onA = await httpSignIn(a.url, 'manager')
    const step = await plannedStep()
    const heard = until(client.sock, 'plan:changed')
    const r = await pin(a.url, onA, step, true)
    expect(r.status).toBe(200)
    expect(await heard).toMatchObject({ operationId: step.id })
    await pin(a.url, onA, { id: step.id, version: ((await r.json()) as { version: number }).version }, false)
  })

  it('when a browser without the instance cookie asks for a page, then the proxy names its instance in a cookie beside the session cookie', async () => {
    const r = await fetch(`${cluster.proxyUrl}/api/session`)
    const cookies = r.headers.getSetCookie()
    expect(cookies.some((c) => c.startsWith(`${STICKY_COOKIE}=`))).toBe(true)
    expect(cookies.some((c) => c.startsWith('millgrain.sid='))).toBe(true)
  })
})
