// Jobs at risk on the board: a piece is tight when it finishes on its due day, or with less than one working day of open
// hours left before its due day ends; late when it finishes after its due day.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, asc, eq, inArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { boardData } from '../../server/services/board'
import { depositHolds } from '../../server/services/deposit-hold'
import { createTestDb, type TestDb } from '../setup/db'
import { benchIdByName, firstWorkshopId, planStep, unplanSteps } from '../setup/fixtures'

let tdb: TestDb
let workshopId: number
let benchId: number
let step: { id: number; jobBagId: number; orderId: number }

// Week of Monday 7 to Sunday 13 December 2026; London is on GMT then, so local times are UTC times.
const at = (day: string, time: string) => new Date(`${day}T${time}:00.000Z`)
const NOW = at('2026-12-07', '09:00')

beforeAll(async () => {
  tdb = await createTestDb()
  const db = tdb.db
  workshopId = await firstWorkshopId(db)
  // Open Monday to Friday 08:30–12:30 and 13:15–17:00: a working day of 4 h + 3 h 45 min = 7 h 45 min (465 min); no closed days.
  const weekPattern = [1, 2, 3, 4, 5].flatMap((weekday) => [
    { weekday, start: '08:30', end: '12:30' },
    { weekday, start: '13:15', end: '17:00' },
  ])
  await db.update(s.workshops).set({ weekPattern }).where(eq(s.workshops.id, workshopId))
  await db.delete(s.closures).where(eq(s.closures.workshopId, workshopId))
  benchId = await benchIdByName(db, 'Setting bench A')
  // Nothing else on the plan: one open bench step of one job bag, booked by hand in each case below.
  await unplanSteps(db)
  const open = await db
    .select({ id: s.operations.id, jobBagId: s.operations.jobBagId, orderId: s.jobBags.orderId })
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
  step = open.find((o) => !held.has(o.jobBagId))!
  expect(step).toBeDefined()
})
afterAll(async () => {
  await tdb.drop()
})

/** Books the step to end at `end` (an hour before it), promises its order for `due`, and reads the job bag's line on the board. */
async function jobFinishing(end: Date, due: string) {
  await tdb.db.update(s.orders).set({ promisedDate: due }).where(eq(s.orders.id, step.orderId))
  await planStep(tdb.db, step.id, { benchId, personId: null, start: new Date(end.getTime() - 3_600_000), end })
  const board = await boardData(tdb.db, workshopId, { from: '2026-12-07', to: '2026-12-13', now: NOW })
  const job = board.jobs.find((j) => j.jobBagId === step.jobBagId)!
  return { state: job.state, spare: -job.lateWorkingMinutes, dayMinutes: board.dayMinutes }
}

describe('tight pieces', () => {
  it('when a piece due on Friday finishes that Friday at 09:54, then it is tight', async () => {
    // Spare open time, by hand: Fri 09:54–12:30 (2 h 36 min) + 13:15–17:00 (3 h 45 min) = 6 h 21 min = 381 min.
    const j = await jobFinishing(at('2026-12-11', '09:54'), '2026-12-11')
    expect(j).toEqual({ state: 'at-risk', spare: 381, dayMinutes: 465 })
  })
  it('when a piece due on Friday finishes at Thursday’s close, then it has exactly one working day to spare and is on time', async () => {
    // Spare: all of Friday's open hours, 465 min = one working day.
    const j = await jobFinishing(at('2026-12-10', '17:00'), '2026-12-11')
    expect(j).toEqual({ state: 'on-time', spare: 465, dayMinutes: 465 })
  })
  it('when a piece due on a Saturday (closed) finishes on Friday at 10:00, then less than a working day is left and it is tight', async () => {
    // Spare: Fri 10:00–12:30 (2 h 30 min) + 13:15–17:00 (3 h 45 min) = 375 min < 465 min; Saturday has no open hours.
    const j = await jobFinishing(at('2026-12-11', '10:00'), '2026-12-12')
    expect(j).toEqual({ state: 'at-risk', spare: 375, dayMinutes: 465 })
  })
  it('when a piece due on Friday finishes on Monday after it, then it is late', async () => {
    const j = await jobFinishing(at('2026-12-14', '09:30'), '2026-12-11')
    expect(j.state).toBe('late')
    // Late by Mon 08:30–09:30 in open hours: 60 min.
    expect(-j.spare).toBe(60)
  })
})
