// The week load counts today from now: the working time already past today is neither available nor still planned, and the
// rest of the week adds up from there.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, asc, eq, inArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { weekLoad } from '../../server/services/board'
import { depositHolds } from '../../server/services/deposit-hold'
import { createTestDb, type TestDb } from '../setup/db'
import { benchIdByName, firstWorkshopId, planStep, unplanSteps } from '../setup/fixtures'

let tdb: TestDb
let workshopId: number
let benchId: number
let ops: { id: number; kindId: number }[]

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
  ops = open.filter((o) => !held.has(o.jobBagId)).slice(0, 3)
  expect(ops).toHaveLength(3)
  const [a, b, c] = ops as [(typeof ops)[0], (typeof ops)[0], (typeof ops)[0]]
  // No person on these bookings, so the bench's hours alone bound them.
  await planStep(db, a.id, { benchId, personId: null, start: at('2026-12-09', '10:00'), end: at('2026-12-09', '16:00') })
  await planStep(db, b.id, { benchId, personId: null, start: at('2026-12-10', '09:00'), end: at('2026-12-10', '11:00') })
  await planStep(db, c.id, { benchId, personId: null, start: at('2026-12-08', '09:00'), end: at('2026-12-08', '10:00') })
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
