// The week load counts today from now: the working time already past today is neither available nor still planned, and the
// rest of the week adds up from there. A skill's available hours are what its holders have left after their other kinds of work;
// each person has a row of their own.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, asc, eq, inArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { weekLoad } from '../../server/services/board'
import { depositHolds } from '../../server/services/deposit-hold'
import { createTestDb, type TestDb } from '../setup/db'
import { addPerson, benchIdByName, firstWorkshopId, planStep, unplanSteps } from '../setup/fixtures'

let tdb: TestDb
let workshopId: number
let benchId: number
let ops: { id: number; kindId: number }[]
let chasing: number, enamelling: number, wren: number, odile: number
let step: { fri: number; wed: number; thu: number }

// Week of Monday 7 to Sunday 13 December 2026; London is on GMT then, so local times are UTC times.
const MON = '2026-12-07'
const SUN = '2026-12-13'
const at = (day: string, time: string) => `${day}T${time}:00.000Z`

beforeAll(async () => {
  tdb = await createTestDb()
  const db = tdb.db
  workshopId = await firstWorkshopId(db)
  // Open Monday to Friday 09:00–17:30 with lunch 12:30–13:00 (two spans a day), no closed days, and a bench with no downtime.
  const weekPattern = [1, 2, 3, 4, 5].flatMap((weekday) => [
    { weekday, start: '09:00', end: '12:30' },
    { weekday, start: '13:00', end: '17:30' },
  ])
  await db.update(s.workshops).set({ weekPattern }).where(eq(s.workshops.id, workshopId))
  await db.delete(s.closures).where(eq(s.closures.workshopId, workshopId))
  benchId = await benchIdByName(db, 'Setting bench A')
  await db.delete(s.benchDowntime).where(eq(s.benchDowntime.benchId, benchId))
  // Nothing else on the plan: three open bench steps (not outside work, not held for a deposit) planned by hand below.
  await unplanSteps(db)
  const open = await db
    .select({ id: s.operations.id, kindId: s.operations.kindId, jobBagId: s.operations.jobBagId })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(
      and(
        eq(s.orders.status, 'open'),
        eq(s.orders.workshopId, workshopId),
        eq(s.operationKinds.outside, false),
        eq(s.operations.leadDays, 0),
        inArray(s.operations.status, ['pending', 'ready']),
      ),
    )
    .orderBy(asc(s.operations.id))
  const held = await depositHolds(db, workshopId, [...new Set(open.map((o) => o.jobBagId))])
  const free = open.filter((o) => !held.has(o.jobBagId)).slice(0, 6)
  expect(free).toHaveLength(6)
  ops = free.slice(0, 3)
  const [a, b, c] = ops as [(typeof ops)[0], (typeof ops)[0], (typeof ops)[0]]
  // No person on these bookings, so the bench's hours alone bound them.
  await planStep(db, a.id, { benchId, personId: null, start: at('2026-12-09', '10:00'), end: at('2026-12-09', '16:00') })
  await planStep(db, b.id, { benchId, personId: null, start: at('2026-12-10', '09:00'), end: at('2026-12-10', '11:00') })
  await planStep(db, c.id, { benchId, personId: null, start: at('2026-12-08', '09:00'), end: at('2026-12-08', '10:00') })

  // Two kinds of work no one else holds, on a second bench open the workshop's hours: Wren holds both, Odile enamelling only;
  // both work the workshop's week (8 h a day). Three more steps become work of these kinds, planned for them.
  const kinds = await db
    .insert(s.operationKinds)
    .values([
      { workshopId, code: 'chasing', name: 'Chasing & repoussé' },
      { workshopId, code: 'enamelling', name: 'Enamelling' },
    ])
    .returning({ id: s.operationKinds.id })
  ;[chasing, enamelling] = [kinds[0]!.id, kinds[1]!.id]
  wren = await addPerson(db, { workshopId, name: 'Wren Ashdown', skills: { codes: ['chasing', 'enamelling'], level: 3 } })
  odile = await addPerson(db, { workshopId, name: 'Odile Penhale', skills: { codes: ['enamelling'], level: 3 } })
  const benchB = await benchIdByName(db, 'Setting bench B')
  await db.delete(s.benchDowntime).where(eq(s.benchDowntime.benchId, benchB))
  const [d, e, f] = free.slice(3) as [(typeof free)[0], (typeof free)[0], (typeof free)[0]]
  step = { fri: d.id, wed: e.id, thu: f.id }
  await db
    .update(s.operations)
    .set({ kindId: chasing })
    .where(inArray(s.operations.id, [d.id, e.id]))
  await db.update(s.operations).set({ kindId: enamelling }).where(eq(s.operations.id, f.id))
  await planStep(db, d.id, { benchId: benchB, personId: wren, start: at('2026-12-11', '09:00'), end: at('2026-12-11', '14:30') })
  await planStep(db, e.id, { benchId: benchB, personId: wren, start: at('2026-12-09', '13:00'), end: at('2026-12-09', '16:00') })
  await planStep(db, f.id, { benchId: benchB, personId: odile, start: at('2026-12-10', '09:00'), end: at('2026-12-10', '11:00') })
})
afterAll(async () => {
  await tdb?.drop()
})

const benchRow = (load: Awaited<ReturnType<typeof weekLoad>>) => load.rows.find((r) => r.type === 'bench' && r.id === benchId)!
const cell = (load: Awaited<ReturnType<typeof weekLoad>>, day: string) => benchRow(load).cells.find((c) => c.day === day)!

describe('the week load on the current week', () => {
  it('when it is Wednesday 14:00, then today counts the 3.5 h left and the work planned from 14:00 only, and the rest of the week adds up from there', async () => {
    const load = await weekLoad(tdb.db, workshopId, { from: MON, to: SUN, now: new Date(at('2026-12-09', '14:00')) })
    expect(load.countedFrom).toBe(at('2026-12-09', '14:00'))
    // Hand-worked, Wednesday from 14:00: the bench is open 09:00–12:30 and 13:00–17:30 (8 h a day); what is left is 14:00–17:30
    // = 3 h 30 min = 210 min (the morning's 3.5 h and the 13:00–14:00 hour are past).
    // Planned: the step booked 10:00–16:00 works 10:00–12:30 and 13:00–16:00 (5.5 h = 330 min); from 14:00 only 14:00–16:00 = 120 min remains.
    expect(cell(load, '2026-12-09')).toMatchObject({ availableMinutes: 210, plannedMinutes: 120, operationIds: [ops[0]!.id] })
    // Days after today count in full: Thursday 8 h = 480 min with 09:00–11:00 = 120 min planned; Friday 480 min, nothing planned.
    expect(cell(load, '2026-12-10')).toMatchObject({ availableMinutes: 480, plannedMinutes: 120 })
    expect(cell(load, '2026-12-11')).toMatchObject({ availableMinutes: 480, plannedMinutes: 0 })
    expect(cell(load, '2026-12-12')).toMatchObject({ availableMinutes: 0, plannedMinutes: 0 })
    // Days before today keep their whole figures (shown as past, left out of the week's total): Tuesday 480 min, 09:00–10:00 = 60 planned.
    expect(cell(load, '2026-12-08')).toMatchObject({ availableMinutes: 480, plannedMinutes: 60 })
    // The rest of the week, Wednesday from 14:00 to Sunday: available 210 + 480 + 480 + 0 + 0 = 1170 min (19:30 h),
    // planned 120 + 120 + 0 = 240 min (4:00 h).
    const rest = benchRow(load).cells.filter((c) => c.day >= '2026-12-09')
    expect(rest.reduce((t, c) => t + c.availableMinutes, 0)).toBe(1170)
    expect(rest.reduce((t, c) => t + c.plannedMinutes, 0)).toBe(240)
    // The skill row of the step planned today (the only booking on Wednesday) counts the same remaining 120 min of it.
    const skill = load.rows.find((r) => r.type === 'skill' && r.id === ops[0]!.kindId)!
    expect(skill.cells.find((c) => c.day === '2026-12-09')!.plannedMinutes).toBe(120)
  })

  it('when it is Wednesday 08:00, before opening, then the whole of today still counts', async () => {
    const load = await weekLoad(tdb.db, workshopId, { from: MON, to: SUN, now: new Date(at('2026-12-09', '08:00')) })
    // Hand-worked: nothing has passed yet, so 3.5 h + 4.5 h = 8 h = 480 min available and the booked 150 + 180 = 330 min planned.
    expect(cell(load, '2026-12-09')).toMatchObject({ availableMinutes: 480, plannedMinutes: 330 })
    // Nothing of today's working time is past, so the board is given no "from" time to show.
    expect(load.countedFrom).toBeNull()
  })

  it('when it is Wednesday 12:45, in the lunch break, then today counts from 13:00: 4.5 h left and 3 h of the booking', async () => {
    const load = await weekLoad(tdb.db, workshopId, { from: MON, to: SUN, now: new Date(at('2026-12-09', '12:45')) })
    // Hand-worked: 13:00–17:30 = 270 min left; the booking's 13:00–16:00 = 180 min.
    expect(cell(load, '2026-12-09')).toMatchObject({ availableMinutes: 270, plannedMinutes: 180 })
    // The morning is past, so the board says from when today counts.
    expect(load.countedFrom).toBe(at('2026-12-09', '12:45'))
  })
})

type Load = Awaited<ReturnType<typeof weekLoad>>
const row = (load: Load, type: string, id: number) => load.rows.find((r) => r.type === type && r.id === id)!
const day = (load: Load, type: string, id: number, d: string) => {
  const c = row(load, type, id).cells.find((x) => x.day === d)!
  return { planned: c.plannedMinutes, available: c.availableMinutes, ids: c.operationIds }
}

describe('skills and people in the week load', () => {
  const rest = (load: Load, type: string, id: number) =>
    row(load, type, id)
      .cells.filter((c) => c.day >= '2026-12-09')
      .reduce((t, c) => ({ planned: t.planned + c.plannedMinutes, available: t.available + c.availableMinutes }), { planned: 0, available: 0 })
  let load: Load
  beforeAll(async () => {
    load = await weekLoad(tdb.db, workshopId, { from: MON, to: SUN, now: new Date(at('2026-12-09', '14:00')) })
  })

  it('when someone holding two skills is planned 5 h on one, then the other skill offers only her 3 h left, plus what its other holder has', () => {
    // Hand-worked, Friday 11 Dec (8 h = 480 min each): Wren's chasing 09:00–14:30 works 09:00–12:30 and 13:00–14:30 = 300 min.
    // Chasing: 300 planned; available Wren's 480 (she has no other kind of work that day) → 5:00 of 8:00.
    expect(day(load, 'skill', chasing, '2026-12-11')).toEqual({ planned: 300, available: 480, ids: [step.fri] })
    // Enamelling: nothing planned; available Wren's 480 − 300 = 180 plus Odile's 480 = 660 min (11 h), not 16 h.
    expect(day(load, 'skill', enamelling, '2026-12-11')).toEqual({ planned: 0, available: 660, ids: [] })
    // Her own row: 300 planned of her 480.
    expect(day(load, 'person', wren, '2026-12-11')).toEqual({ planned: 300, available: 480, ids: [step.fri] })
    expect(day(load, 'person', odile, '2026-12-11')).toEqual({ planned: 0, available: 480, ids: [] })
  })

  it("when a holder is planned on the skill's own kind of work, then it is planned there and not taken off its available hours", () => {
    // Thursday 10 Dec: Odile's enamelling 09:00–11:00 = 120 min. Enamelling: 120 planned of Wren's 480 + Odile's 480 = 960.
    expect(day(load, 'skill', enamelling, '2026-12-10')).toEqual({ planned: 120, available: 960, ids: [step.thu] })
    // Chasing is Wren's alone: Odile's enamelling takes none of it, 0 of 480.
    expect(day(load, 'skill', chasing, '2026-12-10')).toEqual({ planned: 0, available: 480, ids: [] })
    expect(day(load, 'person', odile, '2026-12-10')).toEqual({ planned: 120, available: 480, ids: [step.thu] })
  })

  it('when it is Wednesday 14:00, then skills and people count today from then too, and the rest of the week is the sum of its days', () => {
    // Wednesday from 14:00: 14:00–17:30 = 210 min of working time each. Wren's chasing 13:00–16:00 leaves 14:00–16:00 = 120 min.
    expect(day(load, 'skill', chasing, '2026-12-09')).toEqual({ planned: 120, available: 210, ids: [step.wed] })
    // Enamelling: Wren 210 − 120 = 90, Odile 210 → 300.
    expect(day(load, 'skill', enamelling, '2026-12-09')).toEqual({ planned: 0, available: 300, ids: [] })
    expect(day(load, 'person', wren, '2026-12-09')).toEqual({ planned: 120, available: 210, ids: [step.wed] })
    // The rest of the week, Wednesday 14:00 to Sunday: enamelling 0 + 120 + 0 planned of 300 + 960 + 660 = 1920 min;
    // chasing 120 + 0 + 300 = 420 of 210 + 480 + 480 = 1170; Wren 420 of 1170; Odile 120 of 210 + 480 + 480 = 1170.
    expect(rest(load, 'skill', enamelling)).toEqual({ planned: 120, available: 1920 })
    expect(rest(load, 'skill', chasing)).toEqual({ planned: 420, available: 1170 })
    expect(rest(load, 'person', wren)).toEqual({ planned: 420, available: 1170 })
    expect(rest(load, 'person', odile)).toEqual({ planned: 120, available: 1170 })
    // Saturday and Sunday: no working time, nothing planned.
    expect(day(load, 'person', wren, '2026-12-12')).toEqual({ planned: 0, available: 0, ids: [] })
  })

  it('when the load is read, then there is one row per person on the staff list, named as they are', () => {
    expect(row(load, 'person', wren).name).toBe('Wren Ashdown')
    expect(row(load, 'person', odile).name).toBe('Odile Penhale')
    expect(load.rows.filter((r) => r.type === 'person').map((r) => r.id)).toEqual(expect.arrayContaining([wren, odile]))
  })
})

describe('the week load when leave takes time that work was planned in', () => {
  it('when Wren is on leave on the Friday her chasing was planned, then it counts where it would now be done (Monday), not nowhere', async () => {
    // The step's own time is set here so the hand-working does not depend on the demo's estimate: 300 min at speed 1.
    await tdb.db.update(s.operations).set({ estimateMinutes: 300 }).where(eq(s.operations.id, step.fri))
    const [l] = await tdb.db.insert(s.leave).values({ personId: wren, startsOn: '2026-12-11', endsOn: '2026-12-11' }).returning({ id: s.leave.id })
    try {
      const now = new Date(at('2026-12-09', '14:00'))
      const thisWeek = await weekLoad(tdb.db, workshopId, { from: MON, to: SUN, now })
      // Friday: Wren has no working time and nothing can be done then.
      expect(day(thisWeek, 'person', wren, '2026-12-11')).toEqual({ planned: 0, available: 0, ids: [] })
      // Re-timed as the plan's figures are: the next time bench B and Wren both work is Monday 14 Dec 09:00; 300 min of working
      // time is 09:00–12:30 (210) and 13:00–14:30 (90). Before, these 5 h were in no cell at all.
      const next = await weekLoad(tdb.db, workshopId, { from: '2026-12-14', to: '2026-12-20', now })
      expect(day(next, 'person', wren, '2026-12-14')).toEqual({ planned: 300, available: 480, ids: [step.fri] })
      expect(day(next, 'skill', chasing, '2026-12-14')).toEqual({ planned: 300, available: 480, ids: [step.fri] })
    } finally {
      await tdb.db.delete(s.leave).where(eq(s.leave.id, l!.id))
    }
  })
})

describe('the week load on weeks gone by and weeks past the planning horizon', () => {
  // Someone working 08:30–17:00 with half an hour for lunch (12:30–13:00), Monday to Friday: 8 h a day, 40 h a full week.
  let maren: number
  let closureId: number
  let leaveId: number
  const now = new Date(at('2026-12-09', '14:00'))
  beforeAll(async () => {
    maren = await addPerson(tdb.db, { workshopId, name: 'Maren Tollervey' })
    const weekPattern = [1, 2, 3, 4, 5].flatMap((weekday) => [
      { weekday, start: '08:30', end: '12:30' },
      { weekday, start: '13:00', end: '17:00' },
    ])
    await tdb.db.update(s.people).set({ weekPattern }).where(eq(s.people.id, maren))
    // Two weeks back: the workshop closed on Thursday 26 November and Maren on leave on Monday 23 November.
    const [c] = await tdb.db
      .insert(s.closures)
      .values({ workshopId, name: 'Workshop closed: stocktake', startsOn: '2026-11-26', endsOn: '2026-11-26' })
      .returning({ id: s.closures.id })
    const [l] = await tdb.db.insert(s.leave).values({ personId: maren, startsOn: '2026-11-23', endsOn: '2026-11-23' }).returning({ id: s.leave.id })
    closureId = c!.id
    leaveId = l!.id
  })
  afterAll(async () => {
    await tdb.db.delete(s.closures).where(eq(s.closures.id, closureId))
    await tdb.db.delete(s.leave).where(eq(s.leave.id, leaveId))
  })
  const total = (load: Load, type: string, id: number) => row(load, type, id).cells.reduce((t, c) => t + c.availableMinutes, 0)
  const byDay = (load: Load, type: string, id: number) => row(load, type, id).cells.map((c) => c.availableMinutes)

  it('when it is Wednesday 9 December and last week is read, then its hours come from the calendar: 40 h for someone working 08:30–17:00 with half an hour for lunch, Monday to Friday', async () => {
    const load = await weekLoad(tdb.db, workshopId, { from: '2026-11-30', to: '2026-12-06', now })
    // Hand-worked: 08:30–12:30 (4 h) and 13:00–17:00 (4 h) = 480 min a weekday, none at the weekend; 5 × 480 = 2400 min = 40 h.
    expect(byDay(load, 'person', maren)).toEqual([480, 480, 480, 480, 480, 0, 0])
    expect(total(load, 'person', maren)).toBe(2400)
    // The bench keeps the workshop's hours, 09:00–12:30 and 13:00–17:30: 8 h a weekday, 40 h the week.
    expect(byDay(load, 'bench', benchId)).toEqual([480, 480, 480, 480, 480, 0, 0])
    // Enamelling is held by Wren and Odile, on the workshop's hours and with nothing else planned then: 2 × 40 h = 4800 min.
    expect(total(load, 'skill', enamelling)).toBe(4800)
    // Nothing of that week is today, so no "from" time.
    expect(load.countedFrom).toBeNull()
  })

  it('when the week before it had a closed day and Maren a day off, then those days have no hours', async () => {
    const load = await weekLoad(tdb.db, workshopId, { from: '2026-11-23', to: '2026-11-29', now })
    // Maren: Monday on leave, Thursday closed: Tuesday, Wednesday and Friday, 3 × 480 = 1440 min (24 h).
    expect(byDay(load, 'person', maren)).toEqual([0, 480, 480, 0, 480, 0, 0])
    // The bench: every weekday but the closed Thursday, 4 × 480 = 1920 min (32 h).
    expect(byDay(load, 'bench', benchId)).toEqual([480, 480, 480, 0, 480, 0, 0])
  })

  it('when a week past the planning horizon is read (twelve weeks from this Monday end on Sunday 28 February), then it has its hours as well', async () => {
    const load = await weekLoad(tdb.db, workshopId, { from: '2027-03-08', to: '2027-03-14', now })
    expect(total(load, 'person', maren)).toBe(2400)
    expect(total(load, 'bench', benchId)).toBe(2400)
  })
})
