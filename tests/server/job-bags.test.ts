// Job bags against real PostgreSQL: the page's data, routing edits (estimates with reasons, add / skip / reorder), hold and cancel, the transition table.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { OPERATION_STATUSES, OPERATION_TRANSITIONS, JOB_BAG_STATUSES, JOB_BAG_TRANSITIONS, deriveJobBagStatus } from '../../shared/domain/status'
import { and, asc, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { auditRows, expectCleanError, expectFieldError } from './helpers'
import { benchId, freshReady, rid } from './bench-fixtures'

let t: TestApp
let manager: Agent
let sales: Agent
let setter: Agent
let bagId: number
interface Op {
  id: number
  key: string
  name: string
  status: string
  version: number
  seq: number
  after: string[]
  estimateMinutes: number
  estimateSource: string
  actualMinutes: number
  waitingFor: string[]
}
const get = async (id = bagId) =>
  (await manager.get(`/api/job-bags/${id}`)).body as {
    version: number
    status: string
    operations: Op[]
    history: { action: string }[]
    plannedMinutes: number
    order: Record<string, unknown>
    nextOperationId: number | null
  }
const op = (b: { operations: Op[] }, key: string) => b.operations.find((o) => o.key === key)!

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  sales = await signedIn(t.app, 'sales')
  setter = await signedIn(t.app, 'bench')
  // A ring resize: cut → solder → file → polish.
  const [bag] = await t.db
    .select({ id: s.jobBags.id })
    .from(s.jobBags)
    .innerJoin(s.routings, eq(s.routings.id, s.jobBags.routingId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(and(eq(s.routings.code, 'ring-resize'), eq(s.orders.status, 'open')))
    .orderBy(asc(s.jobBags.id))
    .limit(1)
  bagId = bag!.id
})
afterAll(async () => {
  await t?.close()
})

describe('the transition table', () => {
  it('when reading the table, then it covers every status and follows pending → ready → claimed → running ⇄ paused → done', () => {
    expect(Object.keys(OPERATION_TRANSITIONS).sort()).toEqual([...OPERATION_STATUSES].sort())
    expect(Object.keys(JOB_BAG_TRANSITIONS).sort()).toEqual([...JOB_BAG_STATUSES].sort())
    expect(OPERATION_TRANSITIONS.pending).toContain('ready')
    expect(OPERATION_TRANSITIONS.ready).toContain('claimed')
    expect(OPERATION_TRANSITIONS.claimed).toContain('running')
    expect(OPERATION_TRANSITIONS.running).toEqual(expect.arrayContaining(['paused', 'done']))
    expect(OPERATION_TRANSITIONS.paused).toContain('running')
    expect(OPERATION_TRANSITIONS.done).toEqual([])
    expect(OPERATION_TRANSITIONS.pending).not.toContain('running')
    expect(JOB_BAG_TRANSITIONS.cancelled).toEqual([])
  })

  it('when operations move, then the job bag status follows (on hold stays until lifted)', () => {
    expect(deriveJobBagStatus('waiting', ['ready', 'pending'])).toBe('waiting')
    expect(deriveJobBagStatus('waiting', ['claimed', 'pending'])).toBe('in-work')
    expect(deriveJobBagStatus('in-work', ['done', 'skipped'])).toBe('complete')
    expect(deriveJobBagStatus('on-hold', ['done', 'running'])).toBe('on-hold')
    expect(deriveJobBagStatus('cancelled', ['done'])).toBe('cancelled')
  })
})

describe('reading a job bag', () => {
  it('when the manager, sales or a bench user opens it, then the routing comes with planned and actual minutes, the customer’s name and reference and no contact data', async () => {
    const r = await manager.get(`/api/job-bags/${bagId}`)
    expect(r.status).toBe(200)
    expect(r.body.operations.map((o: Op) => o.key)).toEqual(['cut', 'solder', 'file', 'polish'])
    expect(op(r.body, 'cut')).toMatchObject({ status: 'ready', actualMinutes: 0, waitingFor: [] })
    expect(op(r.body, 'solder')).toMatchObject({ status: 'pending', waitingFor: ['cut'], cautions: expect.arrayContaining([expect.stringMatching(/^Torch/)]) })
    expect(r.body.order.customerReference).toMatch(/^C-\d{4}$/)
    // The customer as the office knows them: the name on the customer's row, the code beside it.
    const [customer] = await t.db
      .select({ name: s.customers.name, reference: s.customers.reference })
      .from(s.jobBags)
      .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
      .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
      .where(eq(s.jobBags.id, bagId))
    expect(r.body.order).toMatchObject({ customerName: customer!.name, customerReference: customer!.reference })
    expect(r.body.order.customerName).not.toMatch(/^C-\d{4}$/)
    expect(JSON.stringify(r.body)).not.toMatch(/@example\.com|01632/)
    expect(r.body.nextOperationId).toBe(op(r.body, 'cut').id)
    expect((await sales.get(`/api/job-bags/${bagId}`)).status).toBe(200)
    // The bench knows a piece by the customer's code, as its ticket prints it: no name for a bench user.
    const atBench = await setter.get(`/api/job-bags/${bagId}`)
    expect(atBench.status).toBe(200)
    expect(atBench.body.order).toMatchObject({ customerName: null, customerReference: customer!.reference })
    expectCleanError(await manager.get('/api/job-bags/999999'), 404)
    const list = await sales.get(`/api/job-bags?orderId=${r.body.order.id}`)
    expect(list.body.map((b: { id: number }) => b.id)).toContain(bagId)
  })
})

describe('editing the routing', () => {
  it('when an estimate changes with a reason, then it becomes an override and the reason is kept', async () => {
    const b = await get()
    const file = op(b, 'file')
    const r = await manager.patch(`/api/job-bags/${bagId}/operations/${file.id}`, {
      estimateMinutes: 40,
      reason: 'heavy shank, lots to true up',
      version: file.version,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(op(r.body, 'file')).toMatchObject({
      estimateMinutes: 40,
      estimateSource: 'override',
      estimateChanges: [
        expect.objectContaining({ fromMinutes: file.estimateMinutes, toMinutes: 40, reason: 'heavy shank, lots to true up', by: 'Sam Ottery' }),
      ],
    })
    expect((await auditRows(t, 'operation', file.id))[0]).toMatchObject({ action: 'update-step' })
  })

  it('when an estimate changes without a reason or with a stale version, then 400 / 409', async () => {
    const file = op(await get(), 'file')
    expectFieldError(await manager.patch(`/api/job-bags/${bagId}/operations/${file.id}`, { estimateMinutes: 50, version: file.version }), 'reason')
    expectCleanError(
      await manager.patch(`/api/job-bags/${bagId}/operations/${file.id}`, { estimateMinutes: 50, reason: 'again', version: file.version - 1 }),
      409,
    )
    expectFieldError(
      await manager.patch(`/api/job-bags/${bagId}/operations/${file.id}`, { estimateMinutes: -5, reason: 'oops', version: file.version }),
      'estimateMinutes',
    )
  })

  it('when sales or a bench user tries to edit, then 403', async () => {
    const file = op(await get(), 'file')
    expectCleanError(await sales.patch(`/api/job-bags/${bagId}/operations/${file.id}`, { estimateMinutes: 50, reason: 'sales', version: file.version }), 403)
    expectCleanError(await setter.post(`/api/job-bags/${bagId}/operations/${file.id}/skip`, { reason: 'bench', version: file.version }), 403)
  })

  it('when a step is added between file and polish, then polish waits for it and it is placed before polish', async () => {
    const b = await get()
    const kinds = (await manager.get('/api/operation-kinds')).body as { id: number; code: string }[]
    const r = await manager.post(`/api/job-bags/${bagId}/operations`, {
      kindId: kinds.find((k) => k.code === 'inspection')!.id,
      name: 'Check size on mandrel',
      estimateMinutes: 5,
      after: ['file'],
      before: ['polish'],
      reason: 'customer asked for a check',
      version: b.version,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.operations.map((o: Op) => o.key)).toEqual(['cut', 'solder', 'file', 'check-size-on-mandrel', 'polish'])
    expect(op(r.body, 'polish').after).toContain('check-size-on-mandrel')
    expect(op(r.body, 'check-size-on-mandrel')).toMatchObject({ status: 'pending', estimateSource: 'override' })
  })

  it('when a step would make a loop, then 422 explains it', async () => {
    const b = await get()
    const cut = op(b, 'cut')
    const r = await manager.patch(`/api/job-bags/${bagId}/operations/${cut.id}`, { after: ['polish'], version: cut.version })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/circle/)
  })

  it('when the order puts a step before one it waits for, then 422; a valid order is saved', async () => {
    const b = await get()
    const ids = b.operations.map((o) => o.id)
    const swapped = [ids[1]!, ids[0]!, ...ids.slice(2)]
    const bad = await manager.put(`/api/job-bags/${bagId}/sequence`, { operationIds: swapped, version: b.version })
    expectCleanError(bad, 422)
    expect(bad.body.error).toMatch(/“Solder shank” waits for “Cut shank”/)
    expectFieldError(await manager.put(`/api/job-bags/${bagId}/sequence`, { operationIds: ids.slice(1), version: b.version }), 'operationIds')
    const ok = await manager.put(`/api/job-bags/${bagId}/sequence`, { operationIds: ids, version: b.version })
    expect(ok.status).toBe(200)
    expectCleanError(await manager.put(`/api/job-bags/${bagId}/sequence`, { operationIds: ids, version: b.version }), 409)
  })

  it('when a ready step is removed, then it is skipped and what waited for it becomes ready', async () => {
    const b = await get()
    const cut = op(b, 'cut')
    const r = await manager.post(`/api/job-bags/${bagId}/operations/${cut.id}/skip`, { reason: 'customer brought it pre-cut', version: cut.version })
    expect(r.status).toBe(200)
    expect(op(r.body, 'cut').status).toBe('skipped')
    expect(op(r.body, 'solder').status).toBe('ready')
    expect((await auditRows(t, 'operation', op(r.body, 'solder').id))[0]).toMatchObject({ action: 'ready' })
    expect(r.body.plannedMinutes).toBe(r.body.operations.filter((o: Op) => o.status !== 'skipped').reduce((s: number, o: Op) => s + o.estimateMinutes, 0))
  })
})

describe('hold, resume, cancel', () => {
  it('when the manager puts the bag on hold, then bench claims are refused; after lifting, work goes on', async () => {
    const b = await get()
    const held = await manager.post(`/api/job-bags/${bagId}/status`, { status: 'on-hold', reason: 'waiting for the customer’s decision', version: b.version })
    expect(held.status).toBe(200)
    expect(held.body.status).toBe('on-hold')
    const solder = op(held.body, 'solder')
    const priya = new (setter.constructor as typeof Agent)(t.app)
    await priya.signIn('priya@wrenfield.test')
    const hearth = await benchId(t, 'Forge & soldering station')
    const refused = await priya.post(`/api/bench/operations/${solder.id}/claim`, { requestId: rid(), benchId: hearth })
    expectCleanError(refused, 422)
    const lifted = await manager.post(`/api/job-bags/${bagId}/status`, { status: 'resume', reason: 'customer said go ahead', version: held.body.version })
    // Only a skipped step so far: nothing started, so the bag is waiting again.
    expect(lifted.body.status).toBe('waiting')
    expect((await priya.post(`/api/bench/operations/${solder.id}/claim`, { requestId: rid(), benchId: hearth })).status).toBe(200)
    expect((await auditRows(t, 'job-bag', bagId)).map((a) => a.action)).toContain('status')
  })

  it('when a bag is cancelled, then it stays cancelled and its steps can no longer be claimed', async () => {
    const op2 = await freshReady(t, 'setting', 'set')
    const b = await get(op2.job_bag_id)
    const r = await manager.post(`/api/job-bags/${op2.job_bag_id}/status`, { status: 'cancelled', reason: 'order withdrawn', version: b.version })
    expect(r.status).toBe(200)
    expect(r.body.status).toBe('cancelled')
    expectCleanError(await manager.post(`/api/job-bags/${op2.job_bag_id}/status`, { status: 'on-hold', reason: 'too late', version: r.body.version }), 422)
    const setA = await benchId(t, 'Setting bench A')
    expectCleanError(await setter.post(`/api/bench/operations/${op2.id}/claim`, { requestId: rid(), benchId: setA }), 422)
  })
})
