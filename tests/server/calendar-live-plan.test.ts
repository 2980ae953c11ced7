// A change to the calendar (closure, leave, bench downtime) against the live plan: the steps it leaves in time no one works
// are found with the rule book and named on the board, the live plan's stored figures become those it can really reach
// (re-timed: each step at the next time it can be worked, what follows behind it), a draft is weighed against the same, and
// undoing the change clears it all. A small workshop of its own, so every figure is worked out by hand below.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { storeLiveFigures } from '../../server/planning/live-plan'
import { hashPassword } from '../../server/services/users'
import { Agent, createTestApp, type TestApp } from '../setup/app'
import { addPerson, addWorkshop, WITHOUT_VAT } from '../setup/fixtures'

const TZ = 'Europe/London'
const PASSWORD = 'calendar-check-pass'
let t: TestApp
let manager: Agent
let workshopId: number
let benchId: number
let personId: number
const ids = { solder: 0, polish: 0, hallmark: 0, bagA: 0, bagB: 0 }

// Wednesday of next week, and the days around it (the workshop works Monday to Friday, 09:00–17:00, no break).
const monday = dayjs().tz(TZ).startOf('isoWeek').add(7, 'day')
const day = (n: number) => monday.add(n, 'day').format('YYYY-MM-DD')
const WED = day(2)
/** An instant in the workshop's zone: day offset from next Monday, and the time. */
const at = (n: number, hm: string) => dayjs.tz(`${day(n)} ${hm}`, TZ).toISOString()
/** As findings write a time: with its year only when that is not this year (next week may be in January). */
const when = (n: number, hm: string) => {
  const t = dayjs.tz(`${day(n)} ${hm}`, TZ)
  return t.format(t.year() === dayjs().tz(TZ).year() ? 'ddd D MMM HH:mm' : 'ddd D MMM YYYY HH:mm')
}

/** The live plan as hand-made below: Solder (A) Wed 09–10 and Polish (B) Wed 10–12 on the bench with Ada, then B hallmarked outside for a day. */
const BARS = {
  solder: { start: at(2, '09:00'), end: at(2, '10:00') },
  polish: { start: at(2, '10:00'), end: at(2, '12:00') },
  // Outside work sent at 12:00 on Wednesday is away for the next workshop day (Thursday) and back at its close.
  hallmark: { start: at(2, '12:00'), end: at(4, '00:00') },
}

const published = async () => {
  const r = await manager.get('/api/plans')
  expect(r.status).toBe(200)
  return (r.body as any[]).find((v) => v.status === 'published')
}
const board = async () => {
  const r = await manager.get(`/api/board?from=${day(0)}&to=${day(6)}`)
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body
}
const barOf = (b: any, id: number) => (b.items as any[]).find((i) => i.id === id)

/** The live plan's figures while it fits: A done Wed 10:00 (due by the end of Wed), B back Thu evening (due by the end of Fri). */
const FITS = {
  lateJobs: 0,
  weightedTardiness: 0,
  lateWorkingMinutes: 0,
  worstLateWorkingMinutes: 0,
  completion: at(4, '00:00'),
  jobs: 2,
  operations: 3,
  feasible: true,
  violations: [],
}

beforeAll(async () => {
  t = await createTestApp()
  const week = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '09:00', end: '17:00' }))
  const { workshopId: w } = await addWorkshop(t.db, {
    name: 'Calendar check',
    weekPattern: week,
    users: [{ email: 'manager@calendar.test', name: 'Cal Manager', role: 'manager', passwordHash: await hashPassword(PASSWORD) }],
  })
  workshopId = w
  manager = new Agent(t.app)
  expect((await manager.signIn('manager@calendar.test', PASSWORD)).status).toBe(200)
  const [sol] = await t.db.insert(s.operationKinds).values({ workshopId, code: 'SOL', name: 'Soldering' }).returning()
  const [hm] = await t.db.insert(s.operationKinds).values({ workshopId, code: 'HM', name: 'Hallmarking', outside: true }).returning()
  const [bench] = await t.db.insert(s.benches).values({ workshopId, name: 'Bench 1', kind: 'bench' }).returning()
  benchId = bench!.id
  await t.db.insert(s.benchCapabilities).values({ benchId, kindId: sol!.id })
  personId = await addPerson(t.db, { workshopId, name: 'Ada', skills: { codes: ['SOL'], level: 3 } })
  const [cust] = await t.db.insert(s.customers).values({ workshopId, reference: 'C1', name: 'Cora' }).returning()
  const order = async (number: string, due: string, priority: number) => {
    const [o] = await t.db
      .insert(s.orders)
      .values({ workshopId, number, customerId: cust!.id, title: number, dueDate: due, priority, ...WITHOUT_VAT })
      .returning()
    const [b] = await t.db
      .insert(s.jobBags)
      .values({
        workshopId,
        orderId: o!.id,
        number: `${number}-1`,
        piece: 'Ring',
        params: { metal: 'silver-925', quantity: 1 } as never,
        status: 'in-progress',
      })
      .returning()
    return b!.id
  }
  ids.bagA = await order('A', WED, 1)
  ids.bagB = await order('B', day(4), 2)
  const op = async (bag: number, v: Partial<typeof s.operations.$inferInsert> & { key: string; kindId: number; name: string; estimateMinutes: number }) =>
    (
      await t.db
        .insert(s.operations)
        .values({ jobBagId: bag, seq: 1, status: 'ready', ...v })
        .returning()
    )[0]!.id
  const onBench = { plannedBenchId: benchId, plannedPersonId: personId }
  ids.solder = await op(ids.bagA, {
    key: 'solder',
    kindId: sol!.id,
    name: 'Solder',
    estimateMinutes: 60,
    ...onBench,
    plannedStart: BARS.solder.start,
    plannedEnd: BARS.solder.end,
  })
  ids.polish = await op(ids.bagB, {
    key: 'polish',
    kindId: sol!.id,
    name: 'Polish',
    estimateMinutes: 120,
    ...onBench,
    plannedStart: BARS.polish.start,
    plannedEnd: BARS.polish.end,
  })
  ids.hallmark = await op(ids.bagB, {
    key: 'hallmark',
    seq: 2,
    kindId: hm!.id,
    name: 'Hallmark',
    estimateMinutes: 0,
    leadDays: 1,
    after: ['polish'],
    status: 'pending',
    plannedStart: BARS.hallmark.start,
    plannedEnd: BARS.hallmark.end,
  })
  await t.db.insert(s.planVersions).values({ workshopId, number: 1, status: 'published', publishedAt: new Date().toISOString(), score: {}, assignments: {} })
  await storeLiveFigures(t.db, workshopId)
})
afterAll(async () => {
  await t?.close()
})

describe('a calendar change against the live plan', () => {
  it('when the live plan fits its calendar, then nothing is flagged and its figures are those of its bars', async () => {
    expect((await published()).score).toMatchObject(FITS)
    const b = await board()
    expect(b.findings).toEqual([])
    expect(barOf(b, ids.solder).broken).toBeUndefined()
  })

  it('when a closure is added on a day with planned work, then those steps are flagged naming it, the figures are the re-timed ones, and removing it clears both', async () => {
    const r = await manager.post('/api/closures', { name: 'Boiler repair', startsOn: WED, endsOn: WED })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    // Each step at the next time it can be worked, in the same order: Solder Thu 09–10, Polish Thu 10–12, Hallmark out at
    // 12:00 on Thursday and back at the close of Friday. A is due by the end of Wednesday: 10 h late (600 min × priority 1),
    // 1 working hour (Thu 09–10); B, due by the end of Friday, is back just in time.
    const score = (await published()).score
    expect(score).toMatchObject({
      lateJobs: 1,
      weightedTardiness: 600,
      weightedTardinessHours: 10,
      lateWorkingMinutes: 60,
      worstLateWorkingMinutes: 60,
      completion: at(5, '00:00'),
      jobs: 2,
      operations: 3,
      feasible: false,
    })
    const solder = `“Solder” of A-1 works on Bench 1 during ${when(2, '09:00')}–10:00, when the bench is not available (closed: Boiler repair).`
    const polish = `“Polish” of B-1 works on Bench 1 during ${when(2, '10:00')}–12:00, when the bench is not available (closed: Boiler repair).`
    const hallmark = `“Hallmark” of B-1 is outside work: it was to go out ${when(2, '12:00')} and be back by the end of ${when(3, '00:00').slice(0, -6)}, which no longer fits the workshop's days (closed: Boiler repair).`
    expect(score.violations.map((v: any) => [v.rule, v.operationId, v.message])).toEqual([
      ['within bench working time', String(ids.solder), solder],
      ['within bench working time', String(ids.polish), polish],
      ['outside work', String(ids.hallmark), hallmark],
    ])

    const b = await board()
    expect(b.findings).toHaveLength(3)
    // The bars stay where the plan put them; each says why it cannot happen then.
    expect(barOf(b, ids.solder)).toMatchObject({ start: BARS.solder.start, end: BARS.solder.end, broken: solder, late: true })
    expect(barOf(b, ids.polish)).toMatchObject({ start: BARS.polish.start, broken: polish })
    expect(barOf(b, ids.hallmark)).toMatchObject({ start: BARS.hallmark.start, broken: hallmark })
    // The job bags' finishes are the re-timed ones, and A is late.
    const job = (id: number) => (b.jobs as any[]).find((j) => j.jobBagId === id)
    expect(job(ids.bagA)).toMatchObject({ expectedCompletion: at(3, '10:00'), state: 'late', lateWorkingMinutes: 60, reason: solder })
    expect(job(ids.bagB)).toMatchObject({ expectedCompletion: at(5, '00:00') })

    const closure = (await manager.get('/api/closures')).body.find((c: any) => c.name === 'Boiler repair')
    expect((await manager.delete(`/api/closures/${closure.id}`)).status).toBe(200)
    expect((await published()).score).toMatchObject(FITS)
    const after = await board()
    expect(after.findings).toEqual([])
    expect(barOf(after, ids.solder).broken).toBeUndefined()
    expect((after.jobs as any[]).find((j) => j.jobBagId === ids.bagA).state).not.toBe('late')
  })

  it("when a person's leave covers their planned work, then their steps are flagged naming the leave, and removing it clears them", async () => {
    const r = await manager.post(`/api/people/${personId}/leave`, { startsOn: WED, endsOn: WED, reason: 'Dentist' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    const score = (await published()).score
    // The same re-timing as the closure: the hallmarking follows the polishing, so B is back at the close of Friday.
    expect(score).toMatchObject({ lateJobs: 1, weightedTardiness: 600, lateWorkingMinutes: 60, completion: at(5, '00:00'), feasible: false })
    expect(score.violations.map((v: any) => v.message)).toEqual([
      `“Solder” of A-1 needs Ada during ${when(2, '09:00')}–10:00, outside their working time (on leave: Dentist).`,
      `“Polish” of B-1 needs Ada during ${when(2, '10:00')}–12:00, outside their working time (on leave: Dentist).`,
    ])
    const leaveId = (r.body.leave as any[])[0].id
    expect((await manager.delete(`/api/people/${personId}/leave/${leaveId}`)).status).toBe(200)
    expect((await published()).score).toMatchObject(FITS)
  })

  it('when bench downtime takes part of planned work, then the steps are flagged for that stretch and the figures follow the work pushed behind it', async () => {
    const r = await manager.post(`/api/benches/${benchId}/downtime`, { startsAt: at(2, '09:30'), endsAt: at(2, '11:00'), reason: 'Motor repair' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    // Solder works 09:00–09:30 and 11:00–11:30, Polish 11:30–13:30, Hallmark leaves 13:30 and is back at the close of
    // Thursday as planned: nothing is late, the last finish is unchanged — but the bars no longer fit.
    const score = (await published()).score
    expect(score).toMatchObject({ ...FITS, feasible: false, violations: expect.any(Array) })
    expect(score.violations.map((v: any) => v.message)).toEqual([
      `“Solder” of A-1 works on Bench 1 during ${when(2, '09:30')}–10:00, when the bench is not available (bench out of use: Motor repair).`,
      `“Polish” of B-1 works on Bench 1 during ${when(2, '10:00')}–11:00, when the bench is not available (bench out of use: Motor repair).`,
    ])
    const downtimeId = (r.body.downtime as any[])[0].id
    expect((await manager.delete(`/api/benches/${benchId}/downtime/${downtimeId}`)).status).toBe(200)
    expect((await published()).score).toMatchObject(FITS)
  })

  it('when a draft is compared with a live plan that no longer fits, then what it buys is weighed against the re-timed live plan', async () => {
    expect((await manager.post('/api/closures', { name: 'Boiler repair', startsOn: WED, endsOn: WED })).status).toBe(201)
    // The draft is the re-timed live plan itself: against what the live plan can really give it changes no finish.
    const [draft] = await t.db
      .insert(s.planVersions)
      .values({
        workshopId,
        number: 2,
        status: 'draft',
        score: { feasible: true },
        assignments: {
          [ids.solder]: { operationId: ids.solder, benchId, personId, start: at(3, '09:00'), end: at(3, '10:00') },
          [ids.polish]: { operationId: ids.polish, benchId, personId, start: at(3, '10:00'), end: at(3, '12:00') },
          [ids.hallmark]: { operationId: ids.hallmark, benchId: null, personId: null, start: at(3, '12:00'), end: at(5, '00:00') },
        },
      })
      .returning({ id: s.planVersions.id })
    const cmp = await manager.get(`/api/plans/${draft!.id}/compare`)
    expect(cmp.status, JSON.stringify(cmp.body)).toBe(200)
    // Its bars move against the board's (all three change time)…
    expect(cmp.body.counts.time).toBe(3)
    // …but against the re-timed live plan no piece finishes earlier or later.
    expect(cmp.body.gains).toEqual({ earlier: 0, later: 0, lessLate: 0, moreLate: 0, newlyLate: 0, noLongerLate: 0, newPieces: 0, newPiecesLate: 0 })
    await t.db.update(s.planVersions).set({ status: 'discarded' }).where(eq(s.planVersions.id, draft!.id))
  })
})
