// How a planner run's end reaches the planners live: a run that finds nothing better than the live plan, and a run stopped by the manager.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { io as connect, type Socket } from 'socket.io-client'
import * as s from '../../server/db/schema/index'
import { waitForRun } from '../../server/planning/runs'
import { httpSignIn, startTestServer } from '../setup/app'

type Srv = Awaited<ReturnType<typeof startTestServer>>
type Session = Awaited<ReturnType<typeof httpSignIn>>
let srv: Srv
let manager: Session
const open: Socket[] = []

function api(a: Session, method: string, path: string, body?: unknown) {
  return fetch(`${srv.url}/api${path}`, {
    method,
    headers: { 'content-type': 'application/json', cookie: a.cookie, 'x-csrf-token': a.csrf },
    body: body === undefined ? undefined : JSON.stringify(body),
  })
}

/** A connected socket that records every event it hears. */
async function listen(a: Session) {
  const sock = connect(srv.url, { extraHeaders: { cookie: a.cookie }, transports: ['websocket'], reconnection: false })
  open.push(sock)
  const heard: { event: string; payload: any }[] = []
  sock.onAny((event, payload) => heard.push({ event, payload }))
  await new Promise<void>((res, rej) => {
    sock.on('connect', () => res())
    sock.on('connect_error', rej)
  })
  return { sock, heard }
}

/** The first `event` heard for run `runId` (waiting for it), or an error naming what was heard meanwhile. */
async function heardFor(l: Awaited<ReturnType<typeof listen>>, event: string, runId: string, timeoutMs = 20_000) {
  const t0 = Date.now()
  for (;;) {
    const hit = l.heard.find((e) => e.event === event && e.payload?.runId === runId)
    if (hit) return hit.payload
    if (Date.now() - t0 > timeoutMs) throw new Error(`no ${event} for run ${runId} within ${timeoutMs} ms; heard ${l.heard.map((e) => e.event).join(', ')}`)
    await new Promise((r) => setTimeout(r, 50))
  }
}

beforeAll(async () => {
  srv = await startTestServer()
  manager = await httpSignIn(srv.url, 'manager')
  // A published plan to compare against: the first run on the demo workshop, published.
  const r = (await (await api(manager, 'POST', '/plans/runs', { timeLimitSeconds: 1 })).json()) as { id: string }
  const done = await waitForRun(srv.db, r.id)
  expect(done, JSON.stringify(done)).toMatchObject({ status: 'done', planId: expect.any(Number) })
  expect((await api(manager, 'POST', `/plans/${done!.planId}/publish`)).status).toBe(200)
  // Every piece due (and promised) long after anything could finish: the live plan has no lateness, and no plan can be
  // less late than none, so under "keep changes small" nothing counts as better than the live plan.
  await srv.db.update(s.orders).set({ dueDate: '2099-12-31', promisedDate: '2099-12-31' })
}, 60_000)
afterAll(async () => {
  for (const sock of open) sock.close()
  await srv?.stop()
})

describe('the end of a planner run, live', () => {
  it('when a run finds no better plan than the live one, then the planners hear that it ended with no better plan, the live plan stays and sales hears nothing', async () => {
    const m = await listen(manager)
    const sales = await listen(await httpSignIn(srv.url, 'sales'))
    const start = await api(manager, 'POST', '/plans/runs', { timeLimitSeconds: 1, stability: 'small-changes' })
    expect(start.status).toBe(202)
    const { id } = (await start.json()) as { id: string }

    const ended = await heardFor(m, 'plan:ended', id)
    expect(ended).toMatchObject({ runId: id, outcome: 'no-better', seq: expect.any(Number) })
    expect(ended.note).toMatch(/No better plan found in 1 s: the live plan stays as it is/)
    // Both plans are 0 h late × priority: nothing is due before 2099.
    expect(ended.live).toMatchObject({ weightedTardiness: 0 })
    expect(ended.best).toMatchObject({ weightedTardiness: 0 })
    expect(ended.note).toMatch(/0 h late × priority/)
    // No draft was made, and none was announced.
    expect(m.heard.filter((e) => e.event === 'plan:drafted' && e.payload?.runId === id)).toEqual([])
    const run = (await (await api(manager, 'GET', `/plans/runs/${id}`)).json()) as Record<string, unknown>
    expect(run).toMatchObject({ status: 'done', planId: null, note: ended.note })
    // A socket that missed it hears it on catch-up.
    const missed = await new Promise<{ event: string; payload: any }[]>((res) => m.sock.emit('changes:since' as any, 0, res))
    expect(missed.some((e) => e.event === 'plan:ended' && e.payload.runId === id)).toBe(true)
    // A run's outcome is the planners' business only.
    await new Promise((r) => setTimeout(r, 300))
    expect(sales.heard.map((e) => e.event)).not.toContain('plan:ended')
  })

  it('when the manager stops a run, then the planners hear that it ended stopped', async () => {
    const m = await listen(manager)
    const start = await api(manager, 'POST', '/plans/runs', { timeLimitSeconds: 30 })
    expect(start.status).toBe(202)
    const { id } = (await start.json()) as { id: string }
    await heardFor(m, 'plan:progress', id)
    expect((await api(manager, 'DELETE', `/plans/runs/${id}`)).status).toBe(200)
    const ended = await heardFor(m, 'plan:ended', id)
    expect(ended).toMatchObject({ runId: id, outcome: 'stopped', seq: expect.any(Number) })
    expect((await waitForRun(srv.db, id))?.status).toBe('cancelled')
  })
})
