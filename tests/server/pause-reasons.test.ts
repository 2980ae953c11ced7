// The workshop's pause reasons against real PostgreSQL: the starting list, the owner's changes, and what a bench pause accepts.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { desc, eq, ne } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { auditRows, expectCleanError, expectFieldError, secondWorkshop } from './helpers'
import { benchId, freshReady, personIdOf, rid } from './bench-fixtures'

let t: TestApp
let owner: Agent
let manager: Agent
let setter: Agent
let setA: number

beforeAll(async () => {
  t = await createTestApp()
  owner = await signedIn(t.app, 'owner')
  manager = await signedIn(t.app, 'manager')
  setter = await signedIn(t.app, 'bench')
  setA = await benchId(t, 'Setting bench A')
})
afterAll(async () => {
  await t?.close()
})

interface Reason {
  id: number
  code: string
  label: string
  needsNote: boolean
  active: boolean
  sort: number
  version: number
}
const list = async (a: Agent = setter): Promise<Reason[]> => {
  const r = await a.get('/api/pause-reasons')
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body
}
const byCode = async (code: string) => (await list(owner)).find((x) => x.code === code)!

/** A setting step the setter has claimed and started, ready to be paused. */
async function running(): Promise<number> {
  const op = await freshReady(t, 'setting', 'set')
  expect((await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })).status).toBe(200)
  expect((await setter.post(`/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: setA })).status).toBe(200)
  return op.id
}
const finish = (id: number) => setter.post(`/api/bench/operations/${id}/finish`, { requestId: rid(), note: '' })

describe('the starting list', () => {
  it('when a workshop has set nothing yet, then the bench is offered break, waiting for stones, waiting for approval, tool or machine fault, called away — and the earlier fixed reasons, so old records keep their names', async () => {
    const reasons = await list()
    expect(reasons.map((r) => r.code)).toEqual([
      'break',
      'waiting-for-stones',
      'waiting-for-parts',
      'waiting-for-approval',
      'tool-fault',
      'called-away',
      'question-for-manager',
      'end-of-day',
      'other',
    ])
    expect(reasons.every((r) => r.active)).toBe(true)
    expect(reasons.find((r) => r.code === 'other')!.needsNote).toBe(true)
    // The seeded history ends some records with "end-of-day" (server/db/seed.ts): its name is in the list.
    const rows = await t.db.selectDistinct({ endReason: s.timeRecords.endReason }).from(s.timeRecords).where(ne(s.timeRecords.endReason, 'finished'))
    for (const { endReason } of rows) expect(reasons.map((r) => r.code)).toContain(endReason)
  })

  it('when two workshops read their lists, then each has its own rows', async () => {
    const other = await secondWorkshop(t, 'pr')
    const mine = await list(owner)
    const theirs = await list(other.agent)
    expect(theirs.map((r) => r.code)).toEqual(mine.map((r) => r.code))
    expect(theirs.map((r) => r.id).filter((id) => mine.some((m) => m.id === id))).toEqual([])
  })
})

describe('pausing with the workshop’s reasons', () => {
  it('when the setter pauses waiting for stones, then the record ends with that code and the history keeps its name', async () => {
    const id = await running()
    const r = await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'waiting-for-stones', note: 'sapphires at the dealer' })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const [rec] = await t.db
      .select({ endReason: s.timeRecords.endReason, note: s.timeRecords.note })
      .from(s.timeRecords)
      .where(eq(s.timeRecords.operationId, id))
      .orderBy(desc(s.timeRecords.id))
      .limit(1)
    expect(rec).toEqual({ endReason: 'waiting-for-stones', note: 'sapphires at the dealer' })
    const [a] = await auditRows(t, 'operation', id)
    expect(a!.details).toMatchObject({ reason: 'waiting-for-stones', reasonLabel: 'Waiting for stones' })
    expect((await setter.post(`/api/bench/operations/${id}/resume`, { requestId: rid(), benchId: setA })).status).toBe(200)
    expect((await finish(id)).status).toBe(200)
  })

  it('when a reason needs a note and none is given, then 400 names the note; an unknown reason gets 400 on reason listing what is offered', async () => {
    const id = await running()
    expectFieldError(await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'tool-fault' }), 'note', /Tool or machine fault/)
    expectFieldError(await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'tea' }), 'reason', /break, waiting-for-stones/)
    expectFieldError(await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: '' }), 'reason')
    expectFieldError(await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 7 }), 'reason')
    const [op] = await t.db.select({ status: s.operations.status }).from(s.operations).where(eq(s.operations.id, id))
    expect(op!.status).toBe('running')
    expect((await finish(id)).status).toBe(200)
  })
})

describe('the owner keeps the list', () => {
  it('when the owner adds “Waiting for a casting”, then it gets a code from its name, sits before “Other” and the bench can pause with it', async () => {
    const r = await owner.post('/api/pause-reasons', { label: 'Waiting for a casting' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body).toMatchObject({ code: 'waiting-for-a-casting', label: 'Waiting for a casting', needsNote: false, active: true })
    const codes = (await list()).map((x) => x.code)
    expect(codes.indexOf('waiting-for-a-casting')).toBe(codes.indexOf('other') - 1)
    expect((await auditRows(t, 'pause-reason', r.body.id))[0]).toMatchObject({ action: 'create' })
    const id = await running()
    expect((await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'waiting-for-a-casting' })).status).toBe(200)
    expect((await setter.post(`/api/bench/operations/${id}/resume`, { requestId: rid(), benchId: setA })).status).toBe(200)
    expect((await finish(id)).status).toBe(200)
  })

  it('when a name is taken (in any case), empty, too long or of the wrong type, then 400 names the field', async () => {
    expectFieldError(await owner.post('/api/pause-reasons', { label: 'called AWAY' }), 'label', /already/)
    expectFieldError(await owner.post('/api/pause-reasons', { label: ' ' }), 'label')
    expectFieldError(await owner.post('/api/pause-reasons', { label: 'x'.repeat(61) }), 'label', /60/)
    expectFieldError(await owner.post('/api/pause-reasons', { label: 'Lunch', needsNote: 'yes' }), 'needsNote')
    const brk = await byCode('break')
    expectFieldError(await owner.patch(`/api/pause-reasons/${brk.id}`, { label: 'Called away', version: brk.version }), 'label', /already/)
    expectFieldError(await owner.patch(`/api/pause-reasons/${brk.id}`, { active: 'no', version: brk.version }), 'active')
    expectFieldError(await owner.patch(`/api/pause-reasons/${brk.id}`, { label: 'Tea break' }), 'version')
  })

  it('when two names give the same code, then the second gets a numbered code', async () => {
    const a = await owner.post('/api/pause-reasons', { label: 'Bench light out!' })
    const b = await owner.post('/api/pause-reasons', { label: 'Bench light out' })
    expect([a.status, b.status]).toEqual([201, 201])
    expect([a.body.code, b.body.code]).toEqual(['bench-light-out', 'bench-light-out-2'])
  })

  it('when the owner renames a reason, then the bench sees the new name and old records keep the code', async () => {
    const brk = await byCode('break')
    const r = await owner.patch(`/api/pause-reasons/${brk.id}`, { label: 'Tea break', version: brk.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body).toMatchObject({ code: 'break', label: 'Tea break', version: brk.version + 1 })
    expectCleanError(await owner.patch(`/api/pause-reasons/${brk.id}`, { label: 'Short break', version: brk.version }), 409)
  })

  it('when the owner switches a reason off, then the bench may no longer pause with it but the list still names it', async () => {
    const q = await byCode('question-for-manager')
    expect((await owner.patch(`/api/pause-reasons/${q.id}`, { active: false, version: q.version })).status).toBe(200)
    const after = (await list()).find((x) => x.code === 'question-for-manager')!
    expect(after).toMatchObject({ label: 'Question for the manager', active: false })
    const id = await running()
    expectFieldError(await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'question-for-manager' }), 'reason', /switched off/)
    expect((await finish(id)).status).toBe(200)
  })

  it('when the owner asks for a note on a reason, then pausing with it needs one', async () => {
    const c = await byCode('called-away')
    expect((await owner.patch(`/api/pause-reasons/${c.id}`, { needsNote: true, version: c.version })).status).toBe(200)
    const id = await running()
    expectFieldError(await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'called-away' }), 'note')
    expect((await setter.post(`/api/bench/operations/${id}/pause`, { requestId: rid(), reason: 'called-away', note: 'delivery at the door' })).status).toBe(200)
    expect((await setter.post(`/api/bench/operations/${id}/resume`, { requestId: rid(), benchId: setA })).status).toBe(200)
    expect((await finish(id)).status).toBe(200)
  })

  it('when the owner would switch off the last reason left on, then 400 on active says the bench could not pause', async () => {
    const on = (await list(owner)).filter((x) => x.active)
    for (const r of on.slice(1)) expect((await owner.patch(`/api/pause-reasons/${r.id}`, { active: false, version: r.version })).status).toBe(200)
    const last = on[0]!
    expectFieldError(await owner.patch(`/api/pause-reasons/${last.id}`, { active: false, version: last.version }), 'active', /at least one/)
    // Back on, for the tests after this one.
    for (const r of (await list(owner)).filter((x) => !x.active))
      expect((await owner.patch(`/api/pause-reasons/${r.id}`, { active: true, version: r.version })).status).toBe(200)
  })

  it('when a manager, a bench user or sales tries to change the list, then 403; a reason of another workshop is 404', async () => {
    const brk = await byCode('break')
    expectCleanError(await manager.post('/api/pause-reasons', { label: 'Lunch' }), 403)
    expectCleanError(await setter.patch(`/api/pause-reasons/${brk.id}`, { label: 'Lunch', version: brk.version }), 403)
    const other = await secondWorkshop(t, 'pr2')
    expectCleanError(await other.agent.patch(`/api/pause-reasons/${brk.id}`, { label: 'Lunch', version: brk.version }), 404)
  })
})

describe('time added by the office', () => {
  it('when a manager adds a record ending with a reason, then it must be finished or one of the workshop’s reasons', async () => {
    const op = await freshReady(t, 'setting', 'set')
    const personId = await personIdOf(t, 'setter@wrenfield.test')
    const body = { personId, startedAt: '2026-11-30T09:00:00Z', endedAt: '2026-11-30T10:00:00Z', reason: 'forgot to tap in' }
    expectFieldError(await manager.post(`/api/operations/${op.id}/time-records`, { ...body, endReason: 'tea' }), 'endReason', /finished or one of/)
    const r = await manager.post(`/api/operations/${op.id}/time-records`, { ...body, endReason: 'waiting-for-stones' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
  })
})
