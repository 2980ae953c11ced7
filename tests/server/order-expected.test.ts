// The order list says when the live plan expects each order done: the day its last planned step ends (the live plan re-timed
// against the calendar, as the order's drawer reckons it), late or tight in working time in the drawer's words, and work that is
// not in the plan. A small workshop of its own (Monday to Friday, 09:00–17:00, no break: a working day is 480 min), so every
// figure below is worked out by hand.
import { eq } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { hashPassword } from '../../server/services/users'
import { Agent, createTestApp, type TestApp } from '../setup/app'
import { addPerson, addWorkshop, WITHOUT_VAT } from '../setup/fixtures'

const TZ = 'Europe/London'
const PASSWORD = 'orders-expected-pass'
let t: TestApp
let sales: Agent
const ids: Record<string, number> = {}
let workshop = 0

// Next week's Monday and the days after it.
const monday = dayjs().tz(TZ).startOf('isoWeek').add(7, 'day')
const day = (n: number) => monday.add(n, 'day').format('YYYY-MM-DD')
/** An instant in the workshop's zone: day offset from next Monday, and the time. */
const at = (n: number, hm: string) => dayjs.tz(`${day(n)} ${hm}`, TZ).toISOString()

beforeAll(async () => {
  t = await createTestApp()
  const week = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '09:00', end: '17:00' }))
  const { workshopId } = await addWorkshop(t.db, {
    name: 'Expected finishes',
    weekPattern: week,
    users: [{ email: 'sales@expected.test', name: 'Sal Es', role: 'sales', passwordHash: await hashPassword(PASSWORD) }],
  })
  workshop = workshopId
  sales = new Agent(t.app)
  expect((await sales.signIn('sales@expected.test', PASSWORD)).status).toBe(200)
  const [sol] = await t.db.insert(s.operationKinds).values({ workshopId, code: 'SOL', name: 'Soldering' }).returning()
  const bench = async (name: string) => {
    const [b] = await t.db.insert(s.benches).values({ workshopId, name, kind: 'bench' }).returning()
    await t.db.insert(s.benchCapabilities).values({ benchId: b!.id, kindId: sol!.id })
    return b!.id
  }
  const ada = {
    plannedBenchId: await bench('Bench 1'),
    plannedPersonId: await addPerson(t.db, { workshopId, name: 'Ada', skills: { codes: ['SOL'], level: 3 } }),
  }
  const boId = await addPerson(t.db, { workshopId, name: 'Bo', skills: { codes: ['SOL'], level: 3 } })
  const bo = { plannedBenchId: await bench('Bench 2'), plannedPersonId: boId }
  // Bo is away on Wednesday.
  await t.db.insert(s.leave).values({ personId: boId, startsOn: day(2), endsOn: day(2) })
  const [cust] = await t.db.insert(s.customers).values({ workshopId, reference: 'C1', name: 'Cora' }).returning()
  type Bar = { plannedBenchId: number; plannedPersonId: number; plannedStart: string; plannedEnd: string }
  /** An order of one job bag: shape (120 min), then polish (60 min); each step on the live plan where a bar is given. */
  const order = async (title: string, due: string, bars: { shape?: Bar; polish?: Bar }, status: 'open' | 'ready' = 'open') => {
    const [o] = await t.db
      .insert(s.orders)
      .values({ workshopId, number: `EX-${title}`, customerId: cust!.id, title, dueDate: due, status, ...WITHOUT_VAT })
      .returning()
    const [b] = await t.db
      .insert(s.jobBags)
      .values({ workshopId, orderId: o!.id, number: `EX-${title}-1`, piece: 'Ring', params: { metal: 'silver-925', quantity: 1 } as never, status: 'waiting' })
      .returning()
    await t.db.insert(s.operations).values([
      { jobBagId: b!.id, seq: 0, key: 'shape', kindId: sol!.id, name: 'Shape', estimateMinutes: 120, status: 'ready', ...bars.shape },
      { jobBagId: b!.id, seq: 1, key: 'polish', kindId: sol!.id, name: 'Polish', estimateMinutes: 60, after: ['shape'], status: 'pending', ...bars.polish },
    ])
    ids[title] = o!.id
  }
  const on = (who: typeof ada, n: number, from: string, to: string): Bar => ({ ...who, plannedStart: at(n, from), plannedEnd: at(n, to) })
  // Due Monday; shaped Tuesday 09:00–11:00, polished Wednesday 10:00–11:00.
  await order('late', day(0), { shape: on(ada, 1, '09:00', '11:00'), polish: on(ada, 2, '10:00', '11:00') })
  // Due Friday; shaped and polished on Monday, 09:00–12:00.
  await order('on-time', day(4), { shape: on(ada, 0, '09:00', '11:00'), polish: on(ada, 0, '11:00', '12:00') })
  // Due Friday; nothing on the plan.
  await order('unplanned', day(4), {})
  // Due Friday; shaped Thursday 09:00–11:00, its polish not on the plan.
  await order('partly', day(4), { shape: on(ada, 3, '09:00', '11:00') })
  // Due Thursday; Bo's shaping Wednesday 14:00–16:00 falls on his leave and his polish Thursday 09:00–10:00 waits behind it.
  await order('retimed', day(3), { shape: on(bo, 2, '14:00', '16:00'), polish: on(bo, 3, '09:00', '10:00') })
  // Due Thursday; shaped by Bo on Monday, polished by him Thursday 10:00–11:00 — behind his re-timed work of the order above.
  await order('pushed', day(3), { shape: on(bo, 0, '09:00', '11:00'), polish: on(bo, 3, '10:00', '11:00') })
  // Ready to collect: no forecast.
  await order('ready', day(4), {}, 'ready')
  // Due Friday; its piece shaped and polished on Monday, 13:00–16:00, and a second piece cancelled before any of it was planned.
  await order('with-cancelled', day(4), { shape: on(ada, 0, '13:00', '15:00'), polish: on(ada, 0, '15:00', '16:00') })
  const [gone] = await t.db
    .insert(s.jobBags)
    .values({
      workshopId,
      orderId: ids['with-cancelled']!,
      number: 'EX-with-cancelled-2',
      piece: 'Pendant',
      params: { metal: 'silver-925', quantity: 1 } as never,
      status: 'cancelled',
    })
    .returning()
  await t.db.insert(s.operations).values({ jobBagId: gone!.id, seq: 0, key: 'shape', kindId: sol!.id, name: 'Shape', estimateMinutes: 120, status: 'ready' })
  // Due Friday; its one piece cancelled, the order itself still open.
  await order('all-cancelled', day(4), {})
  await t.db.update(s.jobBags).set({ status: 'cancelled' }).where(eq(s.jobBags.orderId, ids['all-cancelled']!))
})
afterAll(async () => {
  await t?.close()
})

const listed = async () => {
  const r = await sales.get('/api/orders?pageSize=50')
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return Object.fromEntries((r.body.items as { id: number; expected: unknown }[]).map((o) => [o.id, o.expected]))
}

describe('the order list’s expected finish', () => {
  it('when an order’s last step ends on the live plan after its due day, then the list gives that day and says how late in working time', async () => {
    // Due by the end of Monday (Tuesday 00:00); the polish ends Wednesday 11:00: Tuesday 09–17 (480) + Wednesday 09–11 (120) =
    // 600 working minutes = 1 working day of 480 + 2 h.
    expect((await listed())[ids.late!]).toEqual({
      date: day(2),
      risk: 'late',
      margin: '1 working day 2 h late',
      offPlan: 'none',
      done: false,
      cancelled: false,
    })
    // The drawer words the same job bag in the same words.
    const f = await sales.get(`/api/orders/${ids.late}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    expect(f.body.jobBags[0]).toMatchObject({ expectedDate: day(2), state: 'late', stepsOffPlan: 0 })
    expect(f.body.jobBags[0].why).toContain(', 1 working day 2 h late (due by the end of ')
  })

  it('when an order finishes well before its due day, then the list gives the day and the working time to spare', async () => {
    // Done Monday 12:00, due by the end of Friday: Monday 12–17 (300) + Tuesday to Friday 4 × 480 = 2,220 min = 4 working days 5 h.
    expect((await listed())[ids['on-time']!]).toEqual({
      date: day(0),
      risk: 'on-time',
      margin: '4 working days 5 h to spare',
      offPlan: 'none',
      done: false,
      cancelled: false,
    })
  })

  it('when none of an order’s steps is on the live plan, then the list has no day and says it is not in the plan', async () => {
    expect((await listed())[ids.unplanned!]).toEqual({ date: null, risk: null, margin: null, offPlan: 'all', done: false, cancelled: false })
  })

  it('when only some of its steps are on the live plan, then the list gives the day of those and says some are not in the plan', async () => {
    // Shaped by Thursday 11:00, due by the end of Friday: Thursday 11–17 (360) + Friday 480 = 840 min = 1 working day 6 h.
    expect((await listed())[ids.partly!]).toEqual({
      date: day(3),
      risk: 'on-time',
      margin: '1 working day 6 h to spare',
      offPlan: 'some',
      done: false,
      cancelled: false,
    })
    const f = await sales.get(`/api/orders/${ids.partly}/forecast`)
    expect(f.body.jobBags[0]).toMatchObject({ expectedDate: day(3), stepsOffPlan: 1 })
  })

  it('when a step lies in time no longer worked, then the list takes the finish of the live plan re-timed against the calendar', async () => {
    // Bo is on leave Wednesday: his shaping goes to his next working time, Thursday 09:00–11:00, and the polish behind it to
    // 11:00–12:00. Due by the end of Thursday: finishing on the due day is tight, with Thursday 12–17 = 5 h to spare.
    // (As its bars stand it would end Thursday 10:00, with 7 h to spare.)
    expect((await listed())[ids.retimed!]).toEqual({
      date: day(3),
      risk: 'at-risk',
      margin: 'only 5 h to spare',
      offPlan: 'none',
      done: false,
      cancelled: false,
    })
    const f = await sales.get(`/api/orders/${ids.retimed}/forecast`)
    expect(f.body.jobBags[0]).toMatchObject({ expectedCompletion: at(3, '12:00'), state: 'at-risk' })
  })

  it('when a step is pushed later by another piece’s re-timed work, then its forecast says it moved, not why its bar started', async () => {
    // Bo's Thursday after the re-timing: the order above's shaping 09:00–11:00 and polish 11:00–12:00 (their bars start before
    // this one's), so this polish goes to 12:00–13:00. Due by the end of Thursday: 4 h to spare, tight.
    const f = await sales.get(`/api/orders/${ids.pushed}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    expect(f.body.jobBags[0]).toMatchObject({ expectedCompletion: at(3, '13:00'), state: 'at-risk' })
    const barEnds = dayjs.tz(`${day(3)} 11:00`, TZ)
    const when = barEnds.format(barEnds.year() === dayjs().tz(TZ).year() ? 'ddd D MMM HH:mm' : 'ddd D MMM YYYY HH:mm')
    expect(f.body.jobBags[0].why).toContain(`Last step: moved later, behind work that can no longer be done where it was planned (its bar ends ${when}).`)
  })

  it('when an order is ready to collect, then the list gives no forecast for it', async () => {
    expect((await listed())[ids.ready!]).toBeNull()
  })

  it('when one of an open order’s job bags is cancelled, then the drawer leaves it out as the list does, and the order reads on time', async () => {
    // The piece still made ends Monday 16:00; due by the end of Friday: Monday 16–17 (60) + Tuesday to Friday 4 × 480 = 1,980 min
    // = 4 working days 1 h to spare. The cancelled pendant never counts as work not in the plan.
    expect((await listed())[ids['with-cancelled']!]).toEqual({
      date: day(0),
      risk: 'on-time',
      margin: '4 working days 1 h to spare',
      offPlan: 'none',
      done: false,
      cancelled: false,
    })
    const f = await sales.get(`/api/orders/${ids['with-cancelled']}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    expect(f.body.state).toBe('on-time')
    expect(f.body.jobBags.map((b: { number: string }) => b.number)).toEqual(['EX-with-cancelled-1'])
    expect(f.body.jobBags[0]).toMatchObject({ expectedDate: day(0), state: 'on-time' })
  })
})

describe('an open order whose pieces are all cancelled', () => {
  it('when every job bag is cancelled, then the list says so: no day, nothing counted as not in the plan', async () => {
    expect((await listed())[ids['all-cancelled']!]).toEqual({ date: null, risk: null, margin: null, offPlan: 'none', done: false, cancelled: true })
  })
})

describe('what the drawer says of a piece with no bar', () => {
  const whyOf = async (title: string) => {
    const f = await sales.get(`/api/orders/${ids[title]}/forecast`)
    expect(f.status, JSON.stringify(f.body)).toBe(200)
    return { plan: f.body.plan, state: f.body.jobBags[0].state, why: f.body.jobBags[0].why as string }
  }

  it('when no plan has been published, then it says to publish one', async () => {
    expect(await whyOf('unplanned')).toEqual({ plan: null, state: 'unplanned', why: 'Not on the live plan yet: publish a plan to get a date.' })
  })

  it('when a plan is live, then it says the piece is not in it yet and that a planner run would place it, not to publish a plan', async () => {
    // The bars above stand as the live plan; now a version of it is published too.
    await t.db.insert(s.planVersions).values({ workshopId: workshop, number: 1, status: 'published', publishedAt: at(-7, '09:00') })
    const { plan, state, why } = await whyOf('unplanned')
    expect(plan).toMatchObject({ number: 1 })
    expect(state).toBe('unplanned')
    expect(why).toBe('Not in the live plan yet: run the planner to place it, then publish its plan to get a date.')
    expect(why).not.toContain('publish a plan')
  })
})
