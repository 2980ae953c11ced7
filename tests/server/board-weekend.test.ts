// The board's work while the workshop is shut: someone's own weekend hours and time recorded on a shut day, which "working hours
// only" keeps on the board; a clock left running from an open day through the night is no such work. The shut stretches and that
// work are reckoned for the weeks asked for, weeks gone by included.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import isoWeek from 'dayjs/plugin/isoWeek'
import * as s from '../../server/db/schema/index'
import { boardData } from '../../server/services/board'
import { boardAnswer } from '../../shared/schemas/board'
import { createTestDb, type TestDb } from '../setup/db'
import { firstWorkshopId, readyBenchStep } from '../setup/fixtures'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

const TZ = 'Europe/London'
let t: TestDb

beforeAll(async () => {
  t = await createTestDb()
})
afterAll(async () => {
  await t.drop()
})

describe('work while the workshop is shut', () => {
  it('when someone’s week has Saturday hours and time is recorded on that Saturday, then the board lists those hours; a clock left running since Friday adds nothing', async () => {
    const workshopId = await firstWorkshopId(t.db)
    const [w] = await t.db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
    expect(w!.timeZone).toBe(TZ)
    expect(
      w!.weekPattern.some((p) => p.weekday > 5),
      'the demo workshop is shut at weekends',
    ).toBe(false)
    // Next week, whatever today is: Monday to Sunday, and "now" on its Saturday at 15:00.
    const monday = dayjs(dayjs().tz(TZ).format('YYYY-MM-DD')).startOf('isoWeek').add(7, 'day')
    const day = (n: number) => monday.add(n, 'day').format('YYYY-MM-DD')
    const at = (n: number, hhmm: string) => dayjs.tz(`${day(n)} ${hhmm}`, TZ).toISOString()
    const now = new Date(at(5, '15:00'))

    const first = await readyBenchStep(t.db)
    const second = await readyBenchStep(t.db, [first.id])
    // Her own week: the workshop's, and Saturday 09:00–13:00; no leave in the way.
    await t.db
      .update(s.people)
      .set({ weekPattern: [...w!.weekPattern, { weekday: 6, start: '09:00', end: '13:00' }] })
      .where(eq(s.people.id, first.personId))
    await t.db.delete(s.leave).where(eq(s.leave.personId, first.personId))
    const rec = (operationId: number, startedAt: string, endedAt: string | null) => ({
      operationId,
      personId: first.personId,
      benchId: first.benchId,
      startedAt,
      endedAt,
      endReason: endedAt ? 'end-of-day' : null,
    })
    await t.db.insert(s.timeRecords).values([
      // Inside her Saturday hours.
      rec(first.id, at(5, '09:10'), at(5, '12:40')),
      // Back after her hours, still at it "now" (15:00).
      rec(first.id, at(5, '13:30'), null),
      // Friday: stayed on past the close (begun in open time), and a clock started at 15:00 and never stopped.
      rec(second.id, at(4, '16:30'), at(4, '18:10')),
      rec(second.id, at(4, '15:00'), null),
      // Wednesday: started in the lunch break (12:30–13:15) and stopped only the next morning.
      rec(second.id, at(2, '12:40'), at(3, '10:00')),
    ])

    const board = await boardData(t.db, workshopId, { from: day(0), to: day(6), now })
    expect(boardAnswer.safeParse(JSON.parse(JSON.stringify(board))).error?.issues ?? []).toEqual([])
    // By hand: Wednesday's record up to the 13:15 opening (not the evening and night it ran on through), her Saturday hours
    // 09:00–13:00 (the record 09:10–12:40 inside them) and the running record 13:30 to now (15:00).
    expect(board.shutWork).toEqual([
      { start: at(2, '12:40'), end: at(2, '13:15') },
      { start: at(5, '09:00'), end: at(5, '13:00') },
      { start: at(5, '13:30'), end: at(5, '15:00') },
    ])
  })

  it('when a week long past is asked for, then its nights, lunches and weekend are shut time, and someone’s Saturday hours and a Sunday record there are work while shut', async () => {
    const workshopId = await firstWorkshopId(t.db)
    const [w] = await t.db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
    // "Now" on this week's Wednesday; the week shown thirty weeks before it, before the demo's history and bank holidays.
    const thisMonday = dayjs(dayjs().tz(TZ).format('YYYY-MM-DD')).startOf('isoWeek')
    const now = dayjs.tz(`${thisMonday.add(2, 'day').format('YYYY-MM-DD')} 10:00`, TZ).toDate()
    const monday = thisMonday.subtract(30, 'week')
    const day = (n: number) => monday.add(n, 'day').format('YYYY-MM-DD')
    const at = (n: number, hhmm: string) => dayjs.tz(`${day(n)} ${hhmm}`, TZ).toISOString()
    const closures = await t.db.select().from(s.closures).where(eq(s.closures.workshopId, workshopId))
    expect(closures.filter((c) => c.endsOn >= day(-7) && c.startsOn <= day(13))).toEqual([])

    const op = await readyBenchStep(t.db)
    // Her own week: the workshop's, and Saturday 09:00–13:00; no leave in the way.
    await t.db
      .update(s.people)
      .set({ weekPattern: [...w!.weekPattern, { weekday: 6, start: '09:00', end: '13:00' }] })
      .where(eq(s.people.id, op.personId))
    await t.db.delete(s.leave).where(eq(s.leave.personId, op.personId))
    await t.db.insert(s.timeRecords).values({
      operationId: op.id,
      personId: op.personId,
      benchId: op.benchId,
      startedAt: at(6, '10:00'),
      endedAt: at(6, '11:30'),
      endReason: 'end-of-day',
    })

    const board = await boardData(t.db, workshopId, { from: day(0), to: day(6), now })
    expect(boardAnswer.safeParse(JSON.parse(JSON.stringify(board))).error?.issues ?? []).toEqual([])
    // By hand, from the demo workshop's week (Monday to Friday 08:30–12:30 and 13:15–17:00): the weekend before, each day's lunch
    // and night, and the weekend after, whole.
    const weekdays = [0, 1, 2, 3, 4]
    expect(board.nonWorking).toEqual([
      { start: at(-3, '17:00'), end: at(0, '08:30') },
      ...weekdays.flatMap((n) => [
        { start: at(n, '12:30'), end: at(n, '13:15') },
        { start: at(n, '17:00'), end: at(n === 4 ? 7 : n + 1, '08:30') },
      ]),
    ])
    // Her Saturday hours, and the Sunday record.
    expect(board.shutWork).toEqual([
      { start: at(5, '09:00'), end: at(5, '13:00') },
      { start: at(6, '10:00'), end: at(6, '11:30') },
    ])
  })
})
