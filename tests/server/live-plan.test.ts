// The live plan as one record (server/planning): read typed, drafts saved with string ids read as numbers, and a claim at
// the bench putting its step on the claimer and their bench on the plan, under the live plan's lock, in the claim's transaction.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, desc, eq, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { LOCK } from '../../server/lib/locks'
import { readLivePlan } from '../../server/planning/live-plan'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { addPerson, firstWorkshopId, planStep, readyBenchStep } from '../setup/fixtures'
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
