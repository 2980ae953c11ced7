// The board's bars for a part-timer's interrupted step and for a piece that finishes late: the worked pieces of a step that
// pauses (its span clipped to its bench's and person's joint working time), and a late mark on every bar of a late job bag.
// A small workshop of its own, so every time is worked out by hand below.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { storeLiveFigures } from '../../server/planning/live-plan'
import { hashPassword } from '../../server/services/users'
import { Agent, createTestApp, type TestApp } from '../setup/app'
import { addPerson, addWorkshop, WITHOUT_VAT } from '../setup/fixtures'

const TZ = 'Europe/London'
const PASSWORD = 'board-segments-pass'
let t: TestApp
let manager: Agent
const ids = { rough: 0, cut: 0, solder: 0, bagA: 0, bagB: 0 }

// Next week; the workshop works Monday to Friday 08:30–17:00, Mo mornings only (08:30–12:30).
const monday = dayjs().tz(TZ).startOf('isoWeek').add(7, 'day')
const day = (n: number) => monday.add(n, 'day').format('YYYY-MM-DD')
const at = (n: number, hm: string) => dayjs.tz(`${day(n)} ${hm}`, TZ).toISOString()

/**
 * The live plan, on Fabrication bench 1: A's "Rough out" by Ada Mon 09:00–10:00; A's "Cut off and clean" (94 min) by Mo from
 * Mon 12:08: 22 min until Mo stops at 12:30, the other 72 min from Tue 08:30, so it ends Tue 09:42; B's "Solder" by Ada
 * Mon 13:00–15:00, in the afternoon the bench is free of Mo's step.
 */
const BARS = {
  rough: { start: at(0, '09:00'), end: at(0, '10:00') },
  cut: { start: at(0, '12:08'), end: at(1, '09:42') },
  solder: { start: at(0, '13:00'), end: at(0, '15:00') },
}

const board = async () => {
  const r = await manager.get(`/api/board?from=${day(0)}&to=${day(6)}`)
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body
}
const barOf = (b: any, id: number) => (b.items as any[]).find((i) => i.id === id)

beforeAll(async () => {
  t = await createTestApp()
  const week = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '08:30', end: '17:00' }))
  const { workshopId } = await addWorkshop(t.db, {
    name: 'Segments check',
    weekPattern: week,
    users: [{ email: 'manager@segments.test', name: 'Seg Manager', role: 'manager', passwordHash: await hashPassword(PASSWORD) }],
  })
  manager = new Agent(t.app)
  expect((await manager.signIn('manager@segments.test', PASSWORD)).status).toBe(200)
  const [fab] = await t.db.insert(s.operationKinds).values({ workshopId, code: 'FAB', name: 'Fabrication' }).returning()
  const [bench] = await t.db.insert(s.benches).values({ workshopId, name: 'Fabrication bench 1', kind: 'bench' }).returning()
  await t.db.insert(s.benchCapabilities).values({ benchId: bench!.id, kindId: fab!.id })
  const ada = await addPerson(t.db, { workshopId, name: 'Ada', skills: { codes: ['FAB'], level: 3 } })
  const mo = await addPerson(t.db, { workshopId, name: 'Mo', skills: { codes: ['FAB'], level: 3 } })
  await t.db
    .update(s.people)
    .set({ weekPattern: [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '08:30', end: '12:30' })) })
    .where(eq(s.people.id, mo))
  const [cust] = await t.db.insert(s.customers).values({ workshopId, reference: 'C1', name: 'Cora' }).returning()
  const bag = async (number: string, due: string) => {
    const [o] = await t.db
      .insert(s.orders)
      .values({ workshopId, number, customerId: cust!.id, title: number, dueDate: due, priority: 1, ...WITHOUT_VAT })
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
  // A is due on Monday (by the end of it), B on Friday.
  ids.bagA = await bag('A', day(0))
  ids.bagB = await bag('B', day(4))
  const op = async (jobBagId: number, v: Partial<typeof s.operations.$inferInsert> & { key: string; name: string; estimateMinutes: number }) =>
    (
      await t.db
        .insert(s.operations)
        .values({ jobBagId, seq: 1, status: 'ready', kindId: fab!.id, plannedBenchId: bench!.id, ...v })
        .returning()
    )[0]!.id
  ids.rough = await op(ids.bagA, {
    key: 'rough',
    name: 'Rough out',
    estimateMinutes: 60,
    plannedPersonId: ada,
    plannedStart: BARS.rough.start,
    plannedEnd: BARS.rough.end,
  })
  ids.cut = await op(ids.bagA, {
    key: 'cut',
    seq: 2,
    name: 'Cut off and clean',
    estimateMinutes: 94,
    after: ['rough'],
    status: 'pending',
    plannedPersonId: mo,
    plannedStart: BARS.cut.start,
    plannedEnd: BARS.cut.end,
  })
  ids.solder = await op(ids.bagB, {
    key: 'solder',
    name: 'Solder',
    estimateMinutes: 120,
    plannedPersonId: ada,
    plannedStart: BARS.solder.start,
    plannedEnd: BARS.solder.end,
  })
  await t.db.insert(s.planVersions).values({ workshopId, number: 1, status: 'published', publishedAt: new Date().toISOString(), score: {}, assignments: {} })
  await storeLiveFigures(t.db, workshopId)
})
afterAll(async () => {
  await t?.close()
})

describe('the board for interrupted steps and late pieces', () => {
  it("when a part-timer's step runs past their hours, then its bar carries the stretches really worked, and the bench is not double booked", async () => {
    const b = await board()
    // The bench and Mo are both at work Mon 12:08–12:30 and Tue 08:30–09:42: 22 + 72 = 94 min, the step's estimate.
    expect(barOf(b, ids.cut)).toMatchObject({
      start: BARS.cut.start,
      end: BARS.cut.end,
      segments: [
        { start: at(0, '12:08'), end: at(0, '12:30') },
        { start: at(1, '08:30'), end: at(1, '09:42') },
      ],
    })
    // Work in one stretch carries none.
    expect(barOf(b, ids.solder).segments).toBeUndefined()
    expect(barOf(b, ids.rough).segments).toBeUndefined()
    // Ada's Solder in Mon's afternoon takes the bench while Mo's step waits for Tuesday: the rule book finds no clash.
    expect(b.findings).toEqual([])
  })

  it('when a job bag finishes after its due date, then every one of its bars is marked late, and only the bar past the date ends late', async () => {
    const b = await board()
    // A finishes Tue 09:42, after the end of Monday; B finishes Mon 15:00, days before Friday.
    expect((b.jobs as any[]).find((j) => j.jobBagId === ids.bagA)).toMatchObject({ state: 'late', expectedCompletion: BARS.cut.end })
    expect(barOf(b, ids.rough)).toMatchObject({ lateJob: true, late: false })
    expect(barOf(b, ids.cut)).toMatchObject({ lateJob: true, late: true })
    expect(barOf(b, ids.solder)).toMatchObject({ lateJob: false, late: false })
  })
})
