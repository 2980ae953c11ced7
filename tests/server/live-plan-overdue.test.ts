// Work left behind by its bar on the live plan: a step still running after its bar has ended, and steps nobody started while
// their bars lasted, can only be done from now, so the live plan's figures (the board's job bags, an order's forecast, the
// stored figures) walk them from now on their bench's and person's working time, with what follows on their bench, person and
// routing behind them, never finishing in the past. A small workshop of its own and the clock set by the test, so every time
// is worked out by hand below.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { storeLiveFigures } from '../../server/planning/live-plan'
import { hashPassword } from '../../server/services/users'
import { Agent, createTestApp, type TestApp } from '../setup/app'
import { addPerson, addWorkshop, WITHOUT_VAT } from '../setup/fixtures'
import { rid } from './bench-fixtures'

const TZ = 'Europe/London'
const PASSWORD = 'overdue-work-pass'
let t: TestApp
let manager: Agent
let workshopId: number
const ids = {
  polish: 0,
  clean: 0,
  buff: 0,
  engrave: 0,
  set: 0,
  orderA: 0,
  orderB: 0,
  bagA: 0,
  bagB: 0,
  bagC: 0,
  bagD: 0,
  stamp: 0,
  bench1: 0,
  bench2: 0,
  ada: 0,
  bo: 0,
}

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
const jobOf = (b: any, bag: number) => (b.jobs as any[]).find((j) => j.jobBagId === bag)
const published = async () => {
  const r = await manager.get('/api/plans')
  expect(r.status).toBe(200)
  return (r.body as any[]).find((v) => v.status === 'published')
}
const bench = (action: string, id: number, body: Record<string, unknown> = {}) =>
  manager.post(`/api/bench/operations/${id}/${action}`, { requestId: rid(), ...body })

beforeAll(async () => {
  t = await createTestApp({ SESSION_IDLE_MINUTES: String(14 * 24 * 60) })
  const week = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '09:00', end: '17:00' }))
  const { workshopId: w } = await addWorkshop(t.db, {
    name: 'Work left behind',
    weekPattern: week,
    users: [{ email: 'manager@overdue.test', name: 'Ola Manager', role: 'manager', passwordHash: await hashPassword(PASSWORD) }],
  })
  workshopId = w
  const [pol] = await t.db.insert(s.operationKinds).values({ workshopId, code: 'POL', name: 'Polishing' }).returning()
  const [b1] = await t.db.insert(s.benches).values({ workshopId, name: 'Bench 1', kind: 'bench' }).returning()
  const [b2] = await t.db.insert(s.benches).values({ workshopId, name: 'Bench 2', kind: 'bench' }).returning()
  const [b3] = await t.db.insert(s.benches).values({ workshopId, name: 'Bench 3', kind: 'bench' }).returning()
  ids.bench1 = b1!.id
  ids.bench2 = b2!.id
  await t.db.insert(s.benchCapabilities).values([
    { benchId: ids.bench1, kindId: pol!.id },
    { benchId: ids.bench2, kindId: pol!.id },
    { benchId: b3!.id, kindId: pol!.id },
  ])
  ids.ada = await addPerson(t.db, { workshopId, name: 'Ada', skills: { codes: ['POL'], level: 3 } })
  ids.bo = await addPerson(t.db, { workshopId, name: 'Bo', skills: { codes: ['POL'], level: 3 } })
  const cy = await addPerson(t.db, { workshopId, name: 'Cy', skills: { codes: ['POL'], level: 3 } })
  const [cust] = await t.db.insert(s.customers).values({ workshopId, reference: 'C1', name: 'Cora' }).returning()
  const bagFor = async (number: string, dueDay: number, priority: number) => {
    const [o] = await t.db
      .insert(s.orders)
      .values({ workshopId, number, customerId: cust!.id, title: number, dueDate: day(dueDay), priority, ...WITHOUT_VAT })
      .returning()
    const [bag] = await t.db
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
    return { order: o!.id, bag: bag!.id }
  }
  const step = async (v: Omit<typeof s.operations.$inferInsert, 'kindId'>) =>
    (
      await t.db
        .insert(s.operations)
        .values({ kindId: pol!.id, ...v })
        .returning({ id: s.operations.id })
    )[0]!.id
  // A, due by the end of Monday, priority 2: Polish (1 h, ready) Monday 14:00–15:00, then Clean (1 h) 15:00–16:00, with Ada on
  // Bench 1. Nobody starts them.
  const a = await bagFor('A', 0, 2)
  ids.orderA = a.order
  ids.bagA = a.bag
  const ada1 = { plannedBenchId: ids.bench1, plannedPersonId: ids.ada }
  ids.polish = await step({
    jobBagId: a.bag,
    ...ada1,
    key: 'polish',
    seq: 1,
    name: 'Polish',
    estimateMinutes: 60,
    status: 'ready',
    plannedStart: at(0, '14:00'),
    plannedEnd: at(0, '15:00'),
  })
  ids.clean = await step({
    jobBagId: a.bag,
    ...ada1,
    key: 'clean',
    seq: 2,
    name: 'Clean',
    estimateMinutes: 60,
    after: ['polish'],
    status: 'pending',
    plannedStart: at(0, '15:00'),
    plannedEnd: at(0, '16:00'),
  })
  // C, due on Friday: Buff (1 h, ready) with Ada on Bench 1, Tuesday 11:30–12:30.
  const cBag = await bagFor('C', 4, 1)
  ids.bagC = cBag.bag
  ids.buff = await step({
    jobBagId: cBag.bag,
    ...ada1,
    key: 'buff',
    seq: 1,
    name: 'Buff',
    estimateMinutes: 60,
    status: 'ready',
    plannedStart: at(1, '11:30'),
    plannedEnd: at(1, '12:30'),
  })
  // D, due on Friday: Stamp (30 min, claimed by Cy) with Cy on Bench 3, Monday 16:00–16:30. Nobody starts it.
  const dBag = await bagFor('D', 4, 1)
  ids.bagD = dBag.bag
  ids.stamp = await step({
    jobBagId: dBag.bag,
    plannedBenchId: b3!.id,
    plannedPersonId: cy,
    claimedBy: cy,
    key: 'stamp',
    seq: 1,
    name: 'Stamp',
    estimateMinutes: 30,
    status: 'claimed',
    plannedStart: at(0, '16:00'),
    plannedEnd: at(0, '16:30'),
  })
  // B, due on Friday: Engrave (4 h) with Bo on Bench 2 Monday 09:00–13:00, then Set (1 h) 13:00–14:00.
  const bBag = await bagFor('B', 4, 1)
  ids.orderB = bBag.order
  ids.bagB = bBag.bag
  const bo2 = { plannedBenchId: ids.bench2, plannedPersonId: ids.bo }
  ids.engrave = await step({
    jobBagId: bBag.bag,
    ...bo2,
    key: 'engrave',
    seq: 1,
    name: 'Engrave',
    estimateMinutes: 240,
    status: 'ready',
    plannedStart: at(0, '09:00'),
    plannedEnd: at(0, '13:00'),
  })
  ids.set = await step({
    jobBagId: bBag.bag,
    ...bo2,
    key: 'set',
    seq: 2,
    name: 'Set',
    estimateMinutes: 60,
    after: ['engrave'],
    status: 'pending',
    plannedStart: at(0, '13:00'),
    plannedEnd: at(0, '14:00'),
  })
  await t.db.insert(s.planVersions).values({ workshopId, number: 1, status: 'published', publishedAt: new Date().toISOString(), score: {}, assignments: {} })

  vi.useFakeTimers({ toFake: ['Date'] })
  clock(0, '08:55')
  manager = new Agent(t.app)
  expect((await manager.signIn('manager@overdue.test', PASSWORD)).status).toBe(200)
  // Bo takes Engrave up at Bench 2 on Monday at 09:00 and pauses it at 10:00 (one hour worked), then goes on with it on
  // Tuesday at 10:00: at 11:00 it has had two of its four hours, and is still running though its bar ended Monday 13:00.
  clock(0, '09:00')
  const as = { benchId: ids.bench2, personId: ids.bo }
  expect((await bench('claim', ids.engrave, as)).status).toBe(200)
  expect((await bench('start', ids.engrave, as)).status).toBe(200)
  clock(0, '10:00')
  const paused = await bench('pause', ids.engrave, { reason: 'called-away' })
  expect(paused.status, JSON.stringify(paused.body)).toBe(200)
  clock(1, '10:00')
  const resumed = await bench('resume', ids.engrave, as)
  expect(resumed.status, JSON.stringify(resumed.body)).toBe(200)
})
afterAll(async () => {
  vi.useRealTimers()
  await t?.close()
})

describe('work left behind by its bar on the live plan', () => {
  it('when a step is still running past its bar with two hours left, then its job bag finishes when they are walked from now, and its next step behind it', async () => {
    clock(1, '11:00')
    // Engrave: 240 min less the 120 worked = 120 left, Tuesday 11:00–13:00; Set (its bar Monday 13:00–14:00) behind it
    // 13:00–14:00. B is due on Friday.
    const b = await board()
    expect(b.findings).toEqual([])
    expect(jobOf(b, ids.bagB)).toMatchObject({
      expectedCompletion: at(1, '14:00'),
      state: 'on-time',
      reason: `moved later, behind work that can no longer be done where it was planned (its bar ends ${when(0, '14:00', at(1, '11:00'))})`,
    })
    // The running bar is drawn from its first start to now.
    expect((b.items as any[]).find((i) => i.id === ids.engrave)).toMatchObject({ status: 'running', start: at(0, '09:00') })
    const f = await manager.get(`/api/orders/${ids.orderB}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    expect(f.body.jobBags[0]).toMatchObject({ expectedCompletion: at(1, '14:00') })
  })

  it('when ready and pending steps were planned yesterday and nobody started them, then they are re-timed from now, with what follows on the person behind them', async () => {
    clock(1, '11:00')
    // Polish (planned Monday 14:00–15:00) from now: Tuesday 11:00–12:00, Clean behind it 12:00–13:00. A was due by the end of
    // Monday: 13 h late (780 min), 4 working hours (Tuesday 09:00–13:00).
    const b = await board()
    expect(b.findings).toEqual([])
    expect(jobOf(b, ids.bagA)).toMatchObject({ expectedCompletion: at(1, '13:00'), state: 'late', latenessMinutes: 780, lateWorkingMinutes: 240 })
    // Ada's Buff (Tuesday 11:30–12:30) goes behind Clean: 13:00–14:00.
    expect(jobOf(b, ids.bagC)).toMatchObject({ expectedCompletion: at(1, '14:00') })
    // Cy's claimed Stamp (Monday 16:00–16:30) from now: 11:00–11:30, and its job bag says why.
    expect(jobOf(b, ids.bagD)).toMatchObject({
      expectedCompletion: at(1, '11:30'),
      reason: `not started while its bar lasted, so it starts from now at the earliest (its bar ends ${when(0, '16:30', at(1, '11:00'))})`,
    })
    // The bars themselves stay where the plan put them.
    expect((b.items as any[]).find((i) => i.id === ids.polish)).toMatchObject({ start: at(0, '14:00'), end: at(0, '15:00') })
    const f = await manager.get(`/api/orders/${ids.orderA}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    expect(f.body.jobBags[0]).toMatchObject({ expectedCompletion: at(1, '13:00'), state: 'late' })
    // Its last step, Clean, waits behind Polish.
    expect(f.body.jobBags[0].why).toContain(
      `Last step: moved later, behind work that can no longer be done where it was planned (its bar ends ${when(0, '16:00', at(1, '11:00'))}).`,
    )
  })

  it('when the workshop is shut now, then steps nobody started go to its next working time', async () => {
    clock(1, '19:00')
    // Tuesday 19:00: Polish Wednesday 09:00–10:00, Clean 10:00–11:00, Buff 11:00–12:00 (in the order of their bars), Stamp
    // 09:00–09:30.
    const b = await board()
    expect(jobOf(b, ids.bagA)).toMatchObject({ expectedCompletion: at(2, '11:00') })
    expect(jobOf(b, ids.bagC)).toMatchObject({ expectedCompletion: at(2, '12:00') })
    expect(jobOf(b, ids.bagD)).toMatchObject({
      expectedCompletion: at(2, '09:30'),
      reason: `not started while its bar lasted, so it starts from now at the earliest (its bar ends ${when(0, '16:30', at(1, '19:00'))})`,
    })
  })

  it('when the live plan’s figures are stored, then they count the running work and the steps nobody started from now', async () => {
    clock(1, '11:00')
    await t.db.transaction((tx) => storeLiveFigures(tx, workshopId))
    // A 780 min late × priority 2; B, C and D on time. The last finish: Tuesday 14:00 (B's Set, C's Buff).
    expect((await published()).score).toMatchObject({
      weightedTardiness: 1560,
      lateJobs: 1,
      lateWorkingMinutes: 240,
      worstLateWorkingMinutes: 240,
      completion: at(1, '14:00'),
      jobs: 4,
      operations: 6,
      feasible: true,
      violations: [],
    })
  })
})
