// The live plan as one record (server/planning): read typed, drafts saved with string ids read as numbers, and a claim at
// the bench putting its step on the claimer and their bench on the plan, under the live plan's lock, in the claim's transaction.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, desc, eq, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { LOCK } from '../../server/lib/locks'
import { readLivePlan } from '../../server/planning/live-plan'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { addPerson, firstWorkshopId, planStep, readyBenchStep, unplanSteps } from '../setup/fixtures'
import { loadPlanningData } from '../../server/planning/problem'
import { jointWindows } from '../../server/scheduler/calendar.ts'
import { rid } from './bench-fixtures'

let t: TestApp
let manager: Agent
let workshopId: number

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  workshopId = await firstWorkshopId(t.db)
})
afterAll(async () => {
  await t?.close()
})

const opRow = async (id: number) => (await t.db.select().from(s.operations).where(eq(s.operations.id, id)))[0]!
const claimAudit = async (id: number) =>
  (
    await t.db
      .select({ details: s.auditLog.details })
      .from(s.auditLog)
      .where(and(eq(s.auditLog.entity, 'operation'), eq(s.auditLog.entityId, id), eq(s.auditLog.action, 'claim')))
      .orderBy(desc(s.auditLog.id))
      .limit(1)
  )[0]?.details
/** A fixed hour next week, far from anything the demo books by then (any time will do: the claim keeps it). */
const slot = (hour: number) => ({ start: new Date(Date.UTC(2031, 0, 6, hour)).toISOString(), end: new Date(Date.UTC(2031, 0, 6, hour + 1)).toISOString() })

describe('the live plan', () => {
  it('when a step is planned and pinned, then readLivePlan gives it as a typed record with number ids', async () => {
    const step = await readyBenchStep(t.db)
    const at = slot(9)
    await planStep(t.db, step.id, { benchId: step.benchId, personId: step.personId, ...at })
    await t.db.update(s.operations).set({ pinned: true }).where(eq(s.operations.id, step.id))
    const live = await readLivePlan(t.db, workshopId)
    // Expected: exactly what was written above.
    expect(live.assignments.get(step.id)).toEqual({
      operationId: step.id,
      benchId: step.benchId,
      personId: step.personId,
      start: at.start,
      end: at.end,
      pinned: true,
    })
    await t.db
      .update(s.operations)
      .set({ pinned: false, plannedBenchId: null, plannedPersonId: null, plannedStart: null, plannedEnd: null })
      .where(eq(s.operations.id, step.id))
  })

  it('when a draft was saved with string ids, then comparing it answers numbers and names the operation', async () => {
    const step = await readyBenchStep(t.db)
    const at = slot(11)
    const [last] = await t.db
      .select({ n: s.planVersions.number })
      .from(s.planVersions)
      .where(eq(s.planVersions.workshopId, workshopId))
      .orderBy(desc(s.planVersions.number))
      .limit(1)
    // The shape drafts had before assignments were typed: keyed by id, ids as strings, with segments and a reason.
    const [draft] = await t.db
      .insert(s.planVersions)
      .values({
        workshopId,
        number: (last?.n ?? 0) + 1,
        status: 'draft',
        score: { feasible: true },
        assignments: {
          [String(step.id)]: {
            benchId: String(step.benchId),
            personId: String(step.personId),
            start: at.start,
            end: at.end,
            segments: [{ start: 0, end: 60 }],
            reason: null,
          },
        },
      })
      .returning({ id: s.planVersions.id })
    const r = await manager.get(`/api/plans/${draft!.id}/compare`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const move = (r.body.moves as { operationId: number; to: unknown }[]).find((m) => m.operationId === step.id)
    expect(move?.to).toEqual({ operationId: step.id, benchId: step.benchId, personId: step.personId, start: at.start, end: at.end })
    await t.db.update(s.planVersions).set({ status: 'discarded' }).where(eq(s.planVersions.id, draft!.id))
  })
})

describe('a claim on the live plan', () => {
  it('when a planned step is claimed by someone else, then the plan moves it to them and their bench at the same time, and the claim says so', async () => {
    const step = await readyBenchStep(t.db)
    const other = await addPerson(t.db, { workshopId, name: 'Planned stand-in' })
    const at = slot(13)
    await planStep(t.db, step.id, { benchId: step.benchId, personId: other, ...at })
    // The claimer is also booked on another step at that very hour: the claim stands, the double booking is reported.
    const busy = await readyBenchStep(t.db, [step.id])
    await planStep(t.db, busy.id, { benchId: null, personId: step.personId, ...at })
    const before = await opRow(step.id)
    const r = await manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const after = await opRow(step.id)
    expect({
      bench: after.plannedBenchId,
      person: after.plannedPersonId,
      start: after.plannedStart && new Date(after.plannedStart).toISOString(),
      end: after.plannedEnd && new Date(after.plannedEnd).toISOString(),
    }).toEqual({ bench: step.benchId, person: step.personId, start: at.start, end: at.end })
    // One change, one version step (the claim and its plan effect are one transaction).
    expect(after.version).toBe(before.version + 1)
    const details = (await claimAudit(step.id)) as { plan?: { from: unknown; to: unknown; findings: { rule: string }[] } }
    expect(details.plan).toMatchObject({ from: { benchId: step.benchId, personId: other }, to: { benchId: step.benchId, personId: step.personId } })
    expect(details.plan!.findings.map((f) => f.rule)).toEqual(['person double booking'])
    await t.db
      .update(s.operations)
      .set({ status: 'ready', claimedBy: null, plannedBenchId: null, plannedPersonId: null, plannedStart: null, plannedEnd: null })
      .where(eq(s.operations.id, step.id))
    await t.db
      .update(s.operations)
      .set({ plannedBenchId: null, plannedPersonId: null, plannedStart: null, plannedEnd: null })
      .where(eq(s.operations.id, busy.id))
  })

  it('when an unplanned step is claimed, then it stays off the plan and the claim names no plan change', async () => {
    const step = await readyBenchStep(t.db)
    await t.db
      .update(s.operations)
      .set({ plannedBenchId: null, plannedPersonId: null, plannedStart: null, plannedEnd: null })
      .where(eq(s.operations.id, step.id))
    const r = await manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect((await opRow(step.id)).plannedStart).toBeNull()
    expect((await claimAudit(step.id)) as object).not.toHaveProperty('plan')
    await t.db.update(s.operations).set({ status: 'ready', claimedBy: null }).where(eq(s.operations.id, step.id))
  })

  it('when another change holds the live plan, then a claim waits for it and goes through once it is done', async () => {
    const step = await readyBenchStep(t.db)
    let release!: () => void
    const released = new Promise<void>((res) => {
      release = res
    })
    let locked!: () => void
    const isLocked = new Promise<void>((res) => {
      locked = res
    })
    const holder = t.db.transaction(async (tx) => {
      await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.livePlan}, ${workshopId})`)
      locked()
      await released
    })
    await isLocked
    let answered = false
    const claim = manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId }).then((r) => {
      answered = true
      return r
    })
    // While the lock is held the claim cannot commit: its row stays ready, whatever the machine's speed.
    await new Promise((res) => setTimeout(res, 300))
    expect(answered).toBe(false)
    expect((await opRow(step.id)).status).toBe('ready')
    release()
    await holder
    const r = await claim
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect((await opRow(step.id)).status).toBe('claimed')
    await t.db.update(s.operations).set({ status: 'ready', claimedBy: null }).where(eq(s.operations.id, step.id))
  })
})

describe('cancelled work on the live plan', () => {
  /** Two ready bench steps of different job bags: the first to claim or move, the other to keep a bar and be cancelled. */
  async function twoSteps() {
    const step = await readyBenchStep(t.db)
    const skip = [step.id]
    const bagOf = async (id: number) => (await opRow(id)).jobBagId
    let other = await readyBenchStep(t.db, skip)
    while ((await bagOf(other.id)) === (await bagOf(step.id))) {
      skip.push(other.id)
      other = await readyBenchStep(t.db, skip)
    }
    const otherBag = await bagOf(other.id)
    const [bag] = await t.db.select({ status: s.jobBags.status, orderId: s.jobBags.orderId }).from(s.jobBags).where(eq(s.jobBags.id, otherBag))
    const [order] = await t.db.select({ status: s.orders.status }).from(s.orders).where(eq(s.orders.id, bag!.orderId))
    const restore = async () => {
      await t.db.update(s.jobBags).set({ status: bag!.status }).where(eq(s.jobBags.id, otherBag))
      await t.db.update(s.orders).set({ status: order!.status }).where(eq(s.orders.id, bag!.orderId))
      await unplanSteps(t.db, [step.id, other.id])
      await t.db.update(s.operations).set({ status: 'ready', claimedBy: null, pinned: false }).where(eq(s.operations.id, step.id))
    }
    return { step, other, otherBag, orderId: bag!.orderId, restore }
  }

  for (const cancelled of ['job bag', 'order'] as const)
    it(`when the claimer's other bar at that hour is a cancelled ${cancelled}'s, then the claim finds no double booking`, async () => {
      const { step, other, otherBag, orderId, restore } = await twoSteps()
      try {
        const standIn = await addPerson(t.db, { workshopId, name: `Stand-in for a cancelled ${cancelled}` })
        const at = slot(15)
        await planStep(t.db, step.id, { benchId: step.benchId, personId: standIn, ...at })
        // The claimer kept a bar at that very hour on a step whose job bag (or order) was then cancelled.
        await planStep(t.db, other.id, { benchId: null, personId: step.personId, ...at })
        if (cancelled === 'job bag') await t.db.update(s.jobBags).set({ status: 'cancelled' }).where(eq(s.jobBags.id, otherBag))
        else await t.db.update(s.orders).set({ status: 'cancelled' }).where(eq(s.orders.id, orderId))
        const r = await manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId })
        expect(r.status, JSON.stringify(r.body)).toBe(200)
        const details = (await claimAudit(step.id)) as { plan?: { findings: { rule: string }[] } }
        expect(details.plan!.findings).toEqual([])
        // Off the live plan altogether, though its planned fields are kept.
        expect((await readLivePlan(t.db, workshopId)).assignments.has(other.id)).toBe(false)
      } finally {
        await restore()
      }
    })

  it('when a cancelled job bag’s step kept its bar, then comparing a draft with the live plan does not list it as dropped', async () => {
    const { step, other, otherBag, restore } = await twoSteps()
    const at = slot(17)
    await planStep(t.db, step.id, { benchId: step.benchId, personId: step.personId, ...at })
    await planStep(t.db, other.id, { benchId: step.benchId, personId: step.personId, ...at })
    await t.db.update(s.jobBags).set({ status: 'cancelled' }).where(eq(s.jobBags.id, otherBag))
    const [last] = await t.db
      .select({ n: s.planVersions.number })
      .from(s.planVersions)
      .where(eq(s.planVersions.workshopId, workshopId))
      .orderBy(desc(s.planVersions.number))
      .limit(1)
    // A draft that plans neither step: against the live plan, only the open job bag's step is dropped.
    const [draft] = await t.db
      .insert(s.planVersions)
      .values({ workshopId, number: (last?.n ?? 0) + 1, status: 'draft', score: { feasible: true }, assignments: {} })
      .returning({ id: s.planVersions.id })
    try {
      const r = await manager.get(`/api/plans/${draft!.id}/compare`)
      expect(r.status, JSON.stringify(r.body)).toBe(200)
      const moves = r.body.moves as { operationId: number; change: string[] }[]
      expect(moves.find((m) => m.operationId === step.id)?.change).toEqual(['dropped'])
      expect(moves.find((m) => m.operationId === other.id)).toBeUndefined()
    } finally {
      await t.db.update(s.planVersions).set({ status: 'discarded' }).where(eq(s.planVersions.id, draft!.id))
      await restore()
    }
  })

  it('when a bar is moved by hand onto the time a cancelled job bag’s step kept on that bench, then the move is not refused', async () => {
    const { step, other, otherBag, restore } = await twoSteps()
    try {
      // The rest of the first step's job bag off the plan, so only the other bar can stand in the move's way.
      const mine = await t.db
        .select({ id: s.operations.id })
        .from(s.operations)
        .where(eq(s.operations.jobBagId, (await opRow(step.id)).jobBagId))
      await unplanSteps(
        t.db,
        mine.map((x) => x.id),
      )
      const data = await loadPlanningData(t.db, workshopId, new Date())
      const windows = jointWindows(data.problem).both(String(step.benchId), String(step.personId))!
      // A stretch of the pair's shared working time three weeks ahead, long enough for the step and more.
      const w = windows.find((x) => x.start >= data.problem.now + 21 * 24 * 60 && x.end - x.start >= 180)!
      expect(w, 'the bench and the person share three hours in a row three weeks ahead').toBeTruthy()
      const start = data.clock.toDate(w.start).toISOString()
      await planStep(t.db, other.id, { benchId: step.benchId, personId: step.personId, start, end: data.clock.toDate(w.end).toISOString() })
      const move = async () =>
        manager.patch(`/api/board/operations/${step.id}`, { start, benchId: step.benchId, personId: step.personId, version: (await opRow(step.id)).version })
      // While the other job bag is open its bar holds the bench and the person: the move is a double booking.
      const refused = await move()
      expect(refused.status, JSON.stringify(refused.body)).toBe(422)
      expect(refused.body.details.rule).toMatch(/double booking/)
      await t.db.update(s.jobBags).set({ status: 'cancelled' }).where(eq(s.jobBags.id, otherBag))
      const moved = await move()
      expect(moved.status, JSON.stringify(moved.body)).toBe(200)
      expect(moved.body.start).toBe(start)
    } finally {
      await restore()
    }
  })
})
