// Publishing a draft made before work started: work under way keeps where it really is.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq, ne } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { addDraft, readyBenchStep } from '../setup/fixtures'
import { freshReady, rid } from './bench-fixtures'

let t: TestApp
let manager: Agent
const from = dayjs().tz('Europe/London').startOf('isoWeek').format('YYYY-MM-DD')
const to = dayjs(from).add(27, 'day').format('YYYY-MM-DD')
// The draft's bars: ten days from now, a time no work started today can be planned at.
const later = (h: number) => new Date(Date.now() + 10 * 86_400_000 + h * 3_600_000).toISOString()

const draft = (bars: Parameters<typeof addDraft>[1]) => addDraft(t.db, bars)

const opRow = async (id: number) => (await t.db.select().from(s.operations).where(eq(s.operations.id, id)))[0]!
/** Steps a test here has claimed or started already (not ready any more, but listed so none is picked twice). */
const taken = async () => (await t.db.select({ id: s.operations.id }).from(s.operations).where(ne(s.operations.status, 'ready'))).map((o) => o.id)

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
})
afterAll(async () => {
  await t.close()
})

describe('publishing a draft made before work started', () => {
  it('when a step is started at the bench after the draft was made, then publishing keeps it where it started, on its bench with its person', async () => {
    const step = await readyBenchStep(t.db)
    const [other] = await t.db.select({ id: s.people.id }).from(s.people).where(ne(s.people.id, step.personId)).limit(1)
    const next = await readyBenchStep(t.db, [step.id])
    // The draft puts the step ten days on, with someone else, and another step on its bench from a minute from now.
    const soon = (min: number) => new Date(Date.now() + min * 60_000).toISOString()
    const planId = await draft([
      { operationId: step.id, benchId: step.benchId, personId: other!.id, start: later(0), end: later(1) },
      { operationId: next.id, benchId: step.benchId, personId: next.personId, start: soon(1), end: soon(10) },
    ])
    const claim = await manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    const before = Date.now()
    const start = await manager.post(`/api/bench/operations/${step.id}/start`, {
      requestId: rid(),
      benchId: step.benchId,
      personId: step.personId,
      acknowledgeHazards: true,
    })
    expect(start.status, JSON.stringify(start.body)).toBe(200)
    const after = Date.now()
    // What publishing would leave as it is: the one step of the draft taken up since.
    const cmp = await manager.get(`/api/plans/${planId}/compare`)
    expect(cmp.status).toBe(200)
    expect(cmp.body.underWay).toBe(1)
    const pub = await manager.post(`/api/plans/${planId}/publish`)
    expect(pub.status, JSON.stringify(pub.body)).toBe(200)
    const op = await opRow(step.id)
    // Started between the test's two readings of the clock, on the bench it was started at, with the one who holds it.
    const plannedStart = new Date(op.plannedStart!).getTime()
    expect(plannedStart).toBeGreaterThanOrEqual(before - 1000)
    expect(plannedStart).toBeLessThanOrEqual(after + 1000)
    expect(op.plannedBenchId).toBe(step.benchId)
    expect(op.plannedPersonId).toBe(step.personId)
    // It ends once its working time (the estimate at the holder's speed) has been worked from its start: at least that long
    // after it, and long before the draft's bar ten days on.
    const [sk] = await t.db
      .select({ speed: s.personSkills.speed })
      .from(s.personSkills)
      .where(and(eq(s.personSkills.personId, step.personId), eq(s.personSkills.kindId, step.kindId)))
    const needs = Math.max(1, Math.ceil(step.estimate / Number(sk?.speed ?? 1)))
    const plannedEnd = new Date(op.plannedEnd!).getTime()
    expect(plannedEnd - plannedStart).toBeGreaterThanOrEqual(needs * 60_000)
    expect(plannedEnd).toBeLessThan(new Date(later(0)).getTime())
    // The other step's bar now lies inside the running one's on the same bench: the published version says so.
    const [pv] = await t.db.select({ score: s.planVersions.score }).from(s.planVersions).where(eq(s.planVersions.id, planId))
    const score = pv!.score as { feasible: boolean; violations: { rule: string; operationId?: string | number }[] }
    expect(score.feasible).toBe(false)
    expect(score.violations).toContainEqual(expect.objectContaining({ rule: 'bench double booking', operationId: String(next.id) }))
  })

  it('when a step is claimed at the bench after the draft gave it to someone else, then publishing leaves it with the claimer where the claim put it', async () => {
    const step = await readyBenchStep(t.db, await taken())
    const [other] = await t.db.select({ id: s.people.id }).from(s.people).where(ne(s.people.id, step.personId)).limit(1)
    // On the live plan: with the other person at the step's bench, two days on, 09:00–10:00 (the test sets it; what a claim does
    // to a live bar is then known by hand).
    const liveStart = dayjs().tz('Europe/London').add(2, 'day').hour(9).minute(0).second(0).millisecond(0)
    await t.db
      .update(s.operations)
      .set({
        plannedBenchId: step.benchId,
        plannedPersonId: other!.id,
        plannedStart: liveStart.toISOString(),
        plannedEnd: liveStart.add(1, 'hour').toISOString(),
      })
      .where(eq(s.operations.id, step.id))
    // The draft gives it to the other person ten days on.
    const planId = await draft([{ operationId: step.id, benchId: step.benchId, personId: other!.id, start: later(0), end: later(1) }])
    const claim = await manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    const cmp = await manager.get(`/api/plans/${planId}/compare`)
    expect(cmp.status).toBe(200)
    expect(cmp.body.underWay).toBe(1)
    const pub = await manager.post(`/api/plans/${planId}/publish`)
    expect(pub.status, JSON.stringify(pub.body)).toBe(200)
    const op = await opRow(step.id)
    // The claim moved the live bar to the claimer at its time; publishing kept that, not the draft's bar ten days on.
    expect(op.status).toBe('claimed')
    expect(op.plannedPersonId).toBe(step.personId)
    expect(op.plannedBenchId).toBe(step.benchId)
    expect(new Date(op.plannedStart!).toISOString()).toBe(liveStart.toISOString())
    expect(new Date(op.plannedEnd!).toISOString()).toBe(liveStart.add(1, 'hour').toISOString())
  })

  it('when a step claimed before the draft is given by the draft to the claimer, then publishing takes the draft’s bar', async () => {
    const step = await readyBenchStep(t.db, await taken())
    const claim = await manager.post(`/api/bench/operations/${step.id}/claim`, { requestId: rid(), benchId: step.benchId, personId: step.personId })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    const bar = { start: later(2), end: later(3) }
    const planId = await draft([{ operationId: step.id, benchId: step.benchId, personId: step.personId, ...bar }])
    const cmp = await manager.get(`/api/plans/${planId}/compare`)
    expect(cmp.body.underWay).toBe(0)
    const pub = await manager.post(`/api/plans/${planId}/publish`)
    expect(pub.status, JSON.stringify(pub.body)).toBe(200)
    const op = await opRow(step.id)
    expect(new Date(op.plannedStart!).toISOString()).toBe(bar.start)
    expect(op.plannedPersonId).toBe(step.personId)
  })

  it('when outside work is sent out after the draft was made, then publishing keeps the moment it went and the board says so', async () => {
    const hm = await freshReady(t, 'hallmarking')
    const planId = await draft([{ operationId: hm.id, benchId: null, personId: null, start: later(-9), end: later(15) }])
    const before = Date.now()
    const out = await manager.post(`/api/operations/${hm.id}/send-out`, { requestId: rid(), note: 'to the assay office' })
    expect(out.status, JSON.stringify(out.body)).toBe(200)
    const after = Date.now()
    // What publishing would leave as it is: the one step of the draft taken up since.
    const cmp = await manager.get(`/api/plans/${planId}/compare`)
    expect(cmp.status).toBe(200)
    expect(cmp.body.underWay).toBe(1)
    const pub = await manager.post(`/api/plans/${planId}/publish`)
    expect(pub.status, JSON.stringify(pub.body)).toBe(200)
    const op = await opRow(hm.id)
    const sentAt = new Date(op.plannedStart!).getTime()
    expect(sentAt).toBeGreaterThanOrEqual(before - 1000)
    expect(sentAt).toBeLessThanOrEqual(after + 1000)
    // Back after its working days counted from today: after it went, and before the draft's bar ten days on.
    expect(new Date(op.plannedEnd!).getTime()).toBeGreaterThan(sentAt)
    expect(new Date(op.plannedEnd!).getTime()).toBeLessThan(new Date(later(-9)).getTime())
    const board = await manager.get(`/api/board?from=${from}&to=${to}`)
    expect(board.status).toBe(200)
    const item = board.body.items.find((i: { id: number }) => i.id === hm.id)
    expect(item.actual.start).toBe(new Date(sentAt).toISOString())
    // The reason names the real moment it went (the workshop's local time, to the nearest minute), never midnight.
    const local = dayjs(Math.round(sentAt / 60_000) * 60_000)
      .tz('Europe/London')
      .format('HH:mm')
    expect(item.reason.detail).toContain(`sent out`)
    expect(item.reason.detail).toContain(local)
    expect(item.reason.detail).not.toMatch(/00:00/)
  })
})
