// Paused work on the live plan: a step started at the bench and then paused can only go on from now, so the live plan's
// figures (the board's job bags, an order's forecast, the stored figures) and a publication place what is left of it from now
// on its bench's and person's working time, never from its first start in the past. A small workshop of its own and the
// clock set by the test, so every time is worked out by hand below.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { storeLiveFigures } from '../../server/planning/live-plan'
import { hashPassword } from '../../server/services/users'
import { Agent, createTestApp, type TestApp } from '../setup/app'
import { addPerson, addWorkshop, WITHOUT_VAT } from '../setup/fixtures'
import { rid } from './bench-fixtures'

const TZ = 'Europe/London'
const PASSWORD = 'paused-work-pass'
let t: TestApp
let manager: Agent
let ada: Agent
let workshopId: number
let benchId: number
let personId: number
let planId: number
const ids = { polish: 0, clean: 0, bag: 0, order: 0, engrave: 0, bagB: 0, bo: 0 }

// Next week (the workshop works Monday to Friday, 09:00–17:00, no break), so the clock the test sets is never in the past.
const monday = dayjs().tz(TZ).startOf('isoWeek').add(7, 'day')
const day = (n: number) => monday.add(n, 'day').format('YYYY-MM-DD')
/** An instant in the workshop's zone: day offset from next Monday, and the time. */
const at = (n: number, hm: string) => dayjs.tz(`${day(n)} ${hm}`, TZ).toISOString()
/** Sets the server's clock (Date only: timers and the database keep running). */
const clock = (n: number, hm: string) => vi.setSystemTime(new Date(at(n, hm)))
/** As the forecast writes a time (its year only when that is not the year of the clock the test set). */
const when = (n: number, hm: string, now: string) => {
  const x = dayjs.tz(`${day(n)} ${hm}`, TZ)
  return x.format(x.year() === dayjs(now).tz(TZ).year() ? 'ddd D MMM HH:mm' : 'ddd D MMM YYYY HH:mm')
}

const board = async () => {
  const r = await manager.get(`/api/board?from=${day(0)}&to=${day(6)}`)
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body
}
const jobOf = (b: any, bag = ids.bag) => (b.jobs as any[]).find((j) => j.jobBagId === bag)
const published = async () => {
  const r = await manager.get('/api/plans')
  expect(r.status).toBe(200)
  return (r.body as any[]).find((v) => v.status === 'published')
}
const bench = (ag: Agent, action: string, id: number, body: Record<string, unknown> = {}) =>
  ag.post(`/api/bench/operations/${id}/${action}`, { requestId: rid(), ...body })

beforeAll(async () => {
  t = await createTestApp({ SESSION_IDLE_MINUTES: String(14 * 24 * 60) })
  const week = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '09:00', end: '17:00' }))
  const { workshopId: w, userIds } = await addWorkshop(t.db, {
    name: 'Paused work',
    weekPattern: week,
    users: [
      { email: 'manager@paused.test', name: 'Pia Manager', role: 'manager', passwordHash: await hashPassword(PASSWORD) },
      { email: 'ada@paused.test', name: 'Ada', role: 'bench', passwordHash: await hashPassword(PASSWORD) },
    ],
  })
  workshopId = w
  const [pol] = await t.db.insert(s.operationKinds).values({ workshopId, code: 'POL', name: 'Polishing' }).returning()
  const [b] = await t.db.insert(s.benches).values({ workshopId, name: 'Bench 1', kind: 'bench' }).returning()
  benchId = b!.id
  const [b2] = await t.db.insert(s.benches).values({ workshopId, name: 'Bench 2', kind: 'bench' }).returning()
  await t.db.insert(s.benchCapabilities).values([
    { benchId, kindId: pol!.id },
    { benchId: b2!.id, kindId: pol!.id },
  ])
  personId = await addPerson(t.db, { workshopId, name: 'Ada', userId: userIds[1], skills: { codes: ['POL'], level: 3 } })
  ids.bo = await addPerson(t.db, { workshopId, name: 'Bo', skills: { codes: ['POL'], level: 3 } })
  const [cust] = await t.db.insert(s.customers).values({ workshopId, reference: 'C1', name: 'Cora' }).returning()
  // Due next Monday (by its end), priority 2.
  const [o] = await t.db
    .insert(s.orders)
    .values({ workshopId, number: 'A', customerId: cust!.id, title: 'A', dueDate: day(0), priority: 2, ...WITHOUT_VAT })
    .returning()
  ids.order = o!.id
  const [bag] = await t.db
    .insert(s.jobBags)
    .values({ workshopId, orderId: o!.id, number: 'A-1', piece: 'Ring', params: { metal: 'silver-925', quantity: 1 } as never, status: 'in-progress' })
    .returning()
  ids.bag = bag!.id
  const onBench = { jobBagId: bag!.id, kindId: pol!.id, plannedBenchId: benchId, plannedPersonId: personId }
  // The live plan: Polish (3 h at Ada's speed 1) Monday 09:00–12:00, then Clean (1 h) 12:00–13:00, both with Ada on Bench 1.
  const step = async (v: Omit<typeof s.operations.$inferInsert, 'jobBagId' | 'kindId'>) =>
    (
      await t.db
        .insert(s.operations)
        .values({ ...onBench, ...v })
        .returning({ id: s.operations.id })
    )[0]!.id
  ids.polish = await step({
    key: 'polish',
    seq: 1,
    name: 'Polish',
    estimateMinutes: 180,
    status: 'ready',
    plannedStart: at(0, '09:00'),
    plannedEnd: at(0, '12:00'),
  })
  ids.clean = await step({
    key: 'clean',
    seq: 2,
    name: 'Clean',
    estimateMinutes: 60,
    after: ['polish'],
    status: 'pending',
    plannedStart: at(0, '12:00'),
    plannedEnd: at(0, '13:00'),
  })
  // B, due on Friday: its one step, Engrave (2 h), with Bo on Bench 2 Monday 09:00–11:00.
  const [ob] = await t.db
    .insert(s.orders)
    .values({ workshopId, number: 'B', customerId: cust!.id, title: 'B', dueDate: day(4), priority: 1, ...WITHOUT_VAT })
    .returning()
  const [bagB] = await t.db
    .insert(s.jobBags)
    .values({ workshopId, orderId: ob!.id, number: 'B-1', piece: 'Pendant', params: { metal: 'silver-925', quantity: 1 } as never, status: 'in-progress' })
    .returning()
  ids.bagB = bagB!.id
  const [engrave] = await t.db
    .insert(s.operations)
    .values({
      jobBagId: bagB!.id,
      kindId: pol!.id,
      key: 'engrave',
      seq: 1,
      name: 'Engrave',
      estimateMinutes: 120,
      status: 'ready',
      plannedBenchId: b2!.id,
      plannedPersonId: ids.bo,
      plannedStart: at(0, '09:00'),
      plannedEnd: at(0, '11:00'),
    })
    .returning({ id: s.operations.id })
  ids.engrave = engrave!.id
  const [live] = await t.db
    .insert(s.planVersions)
    .values({ workshopId, number: 1, status: 'published', publishedAt: new Date().toISOString(), score: {}, assignments: {} })
    .returning({ id: s.planVersions.id })
  planId = live!.id

  vi.useFakeTimers({ toFake: ['Date'] })
  clock(0, '08:55')
  manager = new Agent(t.app)
  expect((await manager.signIn('manager@paused.test', PASSWORD)).status).toBe(200)
  ada = new Agent(t.app)
  expect((await ada.signIn('ada@paused.test', PASSWORD)).status).toBe(200)
  // Ada takes Polish up at Bench 1 on Monday at 09:00 and pauses it at 10:00: one hour worked, two of its three still to do.
  // Bo (through the manager) does the same with Engrave at Bench 2: one hour worked, one to do.
  clock(0, '09:00')
  expect((await bench(ada, 'claim', ids.polish, { benchId })).status).toBe(200)
  expect((await bench(ada, 'start', ids.polish, { benchId })).status).toBe(200)
  expect((await bench(manager, 'claim', ids.engrave, { benchId: b2!.id, personId: ids.bo })).status).toBe(200)
  expect((await bench(manager, 'start', ids.engrave, { benchId: b2!.id, personId: ids.bo })).status).toBe(200)
  clock(0, '10:00')
  for (const [ag, id] of [
    [ada, ids.polish],
    [manager, ids.engrave],
  ] as const) {
    const paused = await bench(ag, 'pause', id, { reason: 'called-away' })
    expect(paused.status, JSON.stringify(paused.body)).toBe(200)
  }
})
afterAll(async () => {
  vi.useRealTimers()
  await t?.close()
})

describe('paused work on the live plan', () => {
  it('when a step paused within its bar has more left than the bar has from now, then its job bag finishes when what is left is walked from now', async () => {
    clock(0, '10:30')
    // Counted from its start the bar (09:00–12:00) holds three hours for the two still to do; from now it holds 90 minutes.
    // What is left goes on from now: Polish 10:30–12:30, Clean behind it 12:30–13:30 — on time, due by the end of Monday.
    const b = await board()
    expect(b.findings).toEqual([])
    expect(jobOf(b)).toMatchObject({ expectedCompletion: at(0, '13:30'), latenessMinutes: -(10 * 60 + 30) })
    // Engrave's bar (09:00–11:00) holds 30 minutes from now for the hour left: 10:30–11:30, and its job bag says why.
    expect(jobOf(b, ids.bagB)).toMatchObject({
      expectedCompletion: at(0, '11:30'),
      reason: `paused, and what is left of it can only go on from now (its bar ends ${when(0, '11:00', at(0, '10:30'))})`,
    })
  })

  it('when a step started and paused yesterday still has two hours to do, then the board, the forecast and the stored figures finish its job bag two working hours from now and what follows it behind', async () => {
    clock(1, '11:00')
    // Its bar (Monday 09:00–12:00) lies in the past. From Tuesday 11:00: Polish 11:00–13:00 on Ada's and Bench 1's time, then
    // Clean 13:00–14:00. Due by the end of Monday: 14 h late (840 min), 5 working hours (Tuesday 09:00–14:00).
    const b = await board()
    expect(b.findings).toEqual([])
    expect(jobOf(b)).toMatchObject({ expectedCompletion: at(1, '14:00'), state: 'late', latenessMinutes: 840, lateWorkingMinutes: 300 })
    // Engrave's hour left: Tuesday 11:00–12:00, well before B is due.
    expect(jobOf(b, ids.bagB)).toMatchObject({ expectedCompletion: at(1, '12:00'), state: 'on-time' })
    // The bars themselves stay where the plan put them.
    expect((b.items as any[]).find((i) => i.id === ids.polish)).toMatchObject({ status: 'paused', start: at(0, '09:00'), end: at(0, '12:00') })
    const f = await manager.get(`/api/orders/${ids.order}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    expect(f.body.jobBags[0]).toMatchObject({ expectedCompletion: at(1, '14:00'), state: 'late' })
    expect(f.body.jobBags[0].why).toContain(
      `Last step: moved later, behind work that can no longer be done where it was planned (its bar ends ${when(0, '13:00', at(1, '11:00'))}).`,
    )
    // Stored as the live plan's figures: 840 min × priority 2.
    await t.db.transaction((tx) => storeLiveFigures(tx, workshopId))
    expect((await published()).score).toMatchObject({
      weightedTardiness: 1680,
      weightedTardinessHours: 28,
      lateJobs: 1,
      lateWorkingMinutes: 300,
      worstLateWorkingMinutes: 300,
      completion: at(1, '14:00'),
      jobs: 2,
      operations: 3,
      feasible: true,
      violations: [],
    })
  })

  it('when a plan is published while a step is paused, then its bar runs from its first start to the end of what is left walked from now, and a next step planned before that is held up behind it', async () => {
    clock(1, '11:00')
    // The draft puts Polish on Wednesday and Clean on Tuesday 12:00–13:00.
    const [draft] = await t.db
      .insert(s.planVersions)
      .values({
        workshopId,
        number: 2,
        status: 'draft',
        score: { feasible: true, violations: [], basedOnPlanId: planId },
        assignments: {
          [ids.polish]: { operationId: ids.polish, benchId, personId, start: at(2, '09:00'), end: at(2, '12:00') },
          [ids.clean]: { operationId: ids.clean, benchId, personId, start: at(1, '12:00'), end: at(1, '13:00') },
        },
      })
      .returning({ id: s.planVersions.id })
    const pub = await manager.post(`/api/plans/${draft!.id}/publish`)
    expect(pub.status, JSON.stringify(pub.body)).toBe(200)
    // Polish stays where it was worked: from Monday 09:00 with Ada on Bench 1, its two hours left from Tuesday 11:00 to 13:00.
    const [polish] = await t.db.select().from(s.operations).where(eq(s.operations.id, ids.polish))
    expect(polish).toMatchObject({ plannedBenchId: benchId, plannedPersonId: personId })
    expect(new Date(polish!.plannedStart!).toISOString()).toBe(at(0, '09:00'))
    expect(new Date(polish!.plannedEnd!).toISOString()).toBe(at(1, '13:00'))
    // Clean at 12:00 is before Polish is done: a finding, and the figures have it behind Polish, 13:00–14:00.
    const score = (await published()).score
    expect(score).toMatchObject({ weightedTardiness: 1680, lateJobs: 1, lateWorkingMinutes: 300, completion: at(1, '14:00'), feasible: false })
    expect(score.violations.map((v: any) => [v.rule, v.operationId])).toEqual([['routing order', String(ids.clean)]])
    const b = await board()
    expect(jobOf(b)).toMatchObject({ expectedCompletion: at(1, '14:00'), state: 'late', latenessMinutes: 840 })
  })

  it('when the workshop closes for the rest of the day a paused step was to go on, then the step is flagged for the time from now, and what is left of it goes to the next working day', async () => {
    clock(1, '11:00')
    // Polish's bar (Monday 09:00 to Tuesday 13:00) holds Monday's hours, but what is left of it can only be done from now.
    const r = await manager.post('/api/closures', { name: 'Power cut', startsOn: day(1), endsOn: day(1) })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    const score = (await published()).score
    const whenNow = (n: number, hm: string) => when(n, hm, at(1, '11:00'))
    expect(score.violations.map((v: any) => [v.rule, v.operationId, v.message])).toEqual([
      ['routing order', String(ids.clean), expect.any(String)],
      [
        'within bench working time',
        String(ids.polish),
        `“Polish” of A-1 works on Bench 1 during ${whenNow(1, '11:00')}–13:00, when the bench is not available (closed: Power cut).`,
      ],
      [
        'within bench working time',
        String(ids.clean),
        `“Clean” of A-1 works on Bench 1 during ${whenNow(1, '12:00')}–13:00, when the bench is not available (closed: Power cut).`,
      ],
    ])
    // Polish Wednesday 09:00–11:00, Clean 11:00–12:00: 36 h late (2,160 min × priority 2), 3 working hours (Tuesday is closed).
    expect(score).toMatchObject({ weightedTardiness: 4320, lateJobs: 1, lateWorkingMinutes: 180, completion: at(2, '12:00'), feasible: false })
    const b = await board()
    expect(jobOf(b)).toMatchObject({ expectedCompletion: at(2, '12:00'), state: 'late', latenessMinutes: 2160 })
    // Engrave's bar lies wholly in the past (nothing to flag), but its hour left goes to Wednesday 09:00–10:00 too.
    expect(jobOf(b, ids.bagB)).toMatchObject({ expectedCompletion: at(2, '10:00') })
  })
})
