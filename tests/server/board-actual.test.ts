// The board keeps finished and running work: finished steps at their actual times from the time records (corrections applied,
// voided records left out), running steps from their first start; neither can be moved.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { boardAnswer } from '../../shared/schemas/board'
import { and, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { readyBenchStep as readyStepWithPeople } from '../setup/fixtures'

let t: TestApp
let manager: Agent

/** An open, ready bench step of the demo (not outside work), with a person skilled for it and a bench that hosts it. */
const readyBenchStep = (skip: number[] = []) => readyStepWithPeople(t.db, skip)
const setOp = (id: number, v: Partial<typeof s.operations.$inferInsert>) => t.db.update(s.operations).set(v).where(eq(s.operations.id, id))

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
})
afterAll(async () => {
  await t.close()
})

describe('finished work on the board', () => {
  it('when a step was finished with corrected and voided records, then the board draws it from its first start to its last finish with the minutes worked', async () => {
    const op = await readyBenchStep()
    const add = (startedAt: string, endedAt: string) =>
      manager.post(`/api/operations/${op.id}/time-records`, {
        personId: op.personId,
        benchId: op.benchId,
        startedAt,
        endedAt,
        reason: 'forgot to tap at the bench',
      })
    // Wednesday 25 November 2026 (GMT, so London time equals UTC):
    //   record 1 09:10–10:45                      = 95 min
    //   record 2 written 11:00–12:30, corrected to 11:05–12:20 = 75 min
    //   record 3 13:30–14:40, voided               =  0 min (and not part of the span)
    // Hand-worked: first start 09:10, last finish 12:20, worked 95 + 75 = 170 min in 2 records.
    const r1 = await add('2026-11-25T09:10:00Z', '2026-11-25T10:45:00Z')
    const r2 = await add('2026-11-25T11:00:00Z', '2026-11-25T12:30:00Z')
    const r3 = await add('2026-11-25T13:30:00Z', '2026-11-25T14:40:00Z')
    for (const r of [r1, r2, r3]) expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(
      (
        await manager.post(`/api/time-records/${r2.body.id}/corrections`, {
          startedAt: '2026-11-25T11:05:00Z',
          endedAt: '2026-11-25T12:20:00Z',
          reason: 'tapped late and early',
        })
      ).status,
    ).toBe(201)
    expect((await manager.post(`/api/time-records/${r3.body.id}/corrections`, { void: true, reason: 'tapped on the wrong job' })).status).toBe(201)
    await setOp(op.id, { status: 'done', finishedAt: '2026-11-25T12:20:00Z', plannedStart: '2026-11-25T09:00:00Z', plannedEnd: '2026-11-25T11:30:00Z' })

    const r = await manager.get('/api/board?from=2026-11-23&to=2026-11-29')
    expect(r.status).toBe(200)
    // The whole answer keeps the shared shape (moments as ISO 8601 with an offset).
    expect(boardAnswer.safeParse(r.body).error?.issues ?? []).toEqual([])
    const bar = r.body.items.find((i: { id: number }) => i.id === op.id)
    expect(bar, 'the finished step is on the board').toBeTruthy()
    expect(bar.status).toBe('done')
    expect(bar.start).toBe('2026-11-25T09:10:00.000Z')
    expect(bar.end).toBe('2026-11-25T12:20:00.000Z')
    expect(bar.actual).toEqual({ start: '2026-11-25T09:10:00.000Z', end: '2026-11-25T12:20:00.000Z', workedMinutes: 170, records: 2, fromRecords: true })
    expect(bar.planned).toEqual({ start: '2026-11-25T09:00:00.000Z', end: '2026-11-25T11:30:00.000Z' })
    // Drawn on the bench and with the person of its last record.
    expect(bar.benchId).toBe(op.benchId)
    expect(bar.personId).toBe(op.personId)

    // The same figures straight from the database, corrections applied by hand in SQL (newest change wins, voided left out).
    // Raw SQL on purpose: an independent reckoning of the records the board is checked against, not a fixture.
    const {
      rows: [db],
    } = await t.pool.query(
      `
      with eff as (
        select tr.id,
               coalesce(c.started_at, tr.started_at) as s, coalesce(c.ended_at, tr.ended_at) as e, coalesce(c.kind, '') as kind
          from time_records tr
          left join lateral (select * from time_record_corrections x where x.time_record_id = tr.id and x.kind <> 'add' order by x.id desc limit 1) c on true
         where tr.operation_id = $1)
      select min(s) as first, max(e) as last, sum(extract(epoch from e - s) / 60) as minutes, count(*) as n from eff where kind <> 'void'`,
      [op.id],
    )
    expect(new Date(db.first).toISOString()).toBe(bar.actual.start)
    expect(new Date(db.last).toISOString()).toBe(bar.actual.end)
    expect(Number(db.minutes)).toBe(bar.actual.workedMinutes)
    expect(Number(db.n)).toBe(bar.actual.records)

    // A window that ends before the work began does not carry it.
    const before = await manager.get('/api/board?from=2026-11-16&to=2026-11-24')
    expect(before.body.items.some((i: { id: number }) => i.id === op.id)).toBe(false)
  })

  it('when a finished step is moved, then the move is refused because it is done; a step of a collected order is refused too', async () => {
    const stepOf = (...where: Parameters<typeof and>) =>
      t.db
        .select({ id: s.operations.id, version: s.operations.version })
        .from(s.operations)
        .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
        .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
        .where(and(...where))
        .limit(1)
        .then((r) => r[0]!)
    const done = await stepOf(eq(s.operations.status, 'done'), eq(s.orders.status, 'open'))
    expect(done, 'a finished step of an open order (from the test before)').toBeTruthy()
    const r = await manager.patch(`/api/board/operations/${done.id}`, { start: '2027-01-05T10:00:00Z', version: done.version })
    expect(r.status, JSON.stringify(r.body)).toBe(422)
    expect(r.body.error).toMatch(/is done; it cannot be moved/)
    expect(r.body.details).toEqual({ rule: 'status' })
    const old = await stepOf(eq(s.orders.status, 'collected'))
    const closed = await manager.patch(`/api/board/operations/${old.id}`, { start: '2027-01-05T10:00:00Z', version: old.version })
    expect(closed.status).toBe(422)
    expect(closed.body.details).toEqual({ rule: 'closed' })
    // Nothing was written.
    const [after] = await t.db
      .select({ version: s.operations.version, plannedStart: s.operations.plannedStart })
      .from(s.operations)
      .where(eq(s.operations.id, done.id))
    expect(after!.version).toBe(done.version)
    expect(after!.plannedStart).toBe('2026-11-25T09:00:00.000Z')
  })

  it('when a step is running, then the board draws it from its first start to now and it cannot be moved', async () => {
    const op = await readyBenchStep((await t.db.select({ id: s.operations.id }).from(s.operations).where(eq(s.operations.status, 'done'))).map((x) => x.id))
    const started = new Date(Date.now() - 50 * 60_000)
    await t.db.insert(s.timeRecords).values({ operationId: op.id, personId: op.personId, benchId: op.benchId, startedAt: started.toISOString() })
    await setOp(op.id, { status: 'running', claimedBy: op.personId })
    const from = new Date(started.getTime() - 7 * 86_400_000).toISOString().slice(0, 10)
    const to = new Date(started.getTime() + 7 * 86_400_000).toISOString().slice(0, 10)
    const before = Date.now()
    const r = await manager.get(`/api/board?from=${from}&to=${to}`)
    const bar = r.body.items.find((i: { id: number }) => i.id === op.id)
    expect(bar, 'the running step is on the board, planned or not').toBeTruthy()
    expect(bar.start).toBe(started.toISOString())
    expect(bar.actual.end).toBeNull()
    // Its bar reaches at least to now (or its planned end when later): no plan yet, so start + estimate at the least.
    expect(Date.parse(bar.end)).toBeGreaterThanOrEqual(Math.max(before, started.getTime() + op.estimate * 60_000) - 1000)
    // 50 minutes worked so far (the open record counts up to the moment of the answer).
    expect(bar.actual.workedMinutes).toBeGreaterThanOrEqual(50)
    expect(bar.actual.workedMinutes).toBeLessThan(52)
    const move = await manager.patch(`/api/board/operations/${op.id}`, { start: new Date(Date.now() + 86_400_000).toISOString(), version: bar.version })
    expect(move.status).toBe(422)
    expect(move.body.error).toMatch(/being worked on at the bench; it cannot be moved/)
  })
})
