// Start reasons on the demo's board, checked against the demo's own calendar: a reason names a predecessor only when nothing but
// the workshop's closed hours lies between its ready time and the start; busy people are named with the step that holds them;
// outside work says how long it is out in working days and never that it waits for the workshop's working time.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { boardData } from '../../server/services/board'
import { publishFirstPlans } from '../../server/planning/first-plan'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'

let t: TestApp
let manager: Agent
const TZ = 'Europe/London'
const from = dayjs().tz(TZ).startOf('isoWeek').format('YYYY-MM-DD')
const to = dayjs(from).add(27, 'day').format('YYYY-MM-DD')
const ms = (x: string) => new Date(x).getTime()
/** The board as it is now, read past the board's answer cache (these tests change the live plan in the database directly). */
async function freshBoard(now?: Date) {
  const [w] = await t.db.select().from(s.workshops)
  return boardData(t.db, w!.id, { from, to, ...(now ? { now } : {}) })
}

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  // The demo opens on its first published plan (as `npm start` makes it).
  expect(await publishFirstPlans(t.db, 2)).toHaveLength(1)
})
afterAll(async () => {
  await t.close()
})

describe('start reasons on the demo board', () => {
  it('when a bar waits for its predecessor, then only the workshop’s closed hours lie between the predecessor (with its wait) and the bar', async () => {
    const board = (await manager.get(`/api/board?from=${from}&to=${to}`)).body
    const ops = new Map((await t.db.select().from(s.operations)).map((o) => [o.id, o]))
    // Open time, worked out here from the board's own calendar: not in a closed stretch, not on a closure day.
    const closedStretches = board.nonWorking.map((x: { start: string; end: string }) => [ms(x.start), ms(x.end)] as const)
    const closureDays = board.closures.map(
      (c: { startsOn: string; endsOn: string }) =>
        [dayjs.tz(`${c.startsOn} 00:00`, TZ).valueOf(), dayjs.tz(`${c.endsOn} 00:00`, TZ).add(1, 'day').valueOf()] as const,
    )
    const minutesOpen = (a: number, b: number) => {
      let open = 0
      for (let m = a; m < b; m += 60_000)
        if (
          !closedStretches.some(([x, y]: readonly [number, number]) => x <= m && m < y) &&
          !closureDays.some(([x, y]: readonly [number, number]) => x <= m && m < y)
        )
          open++
      return open
    }
    const closureBetween = (a: number, b: number) => closureDays.some(([x, y]: readonly [number, number]) => x < b && y > a)
    let checked = 0
    for (const i of board.items) {
      if (i.reason?.kind !== 'predecessor' || !i.reason.blockerId) continue
      const pred = ops.get(Number(i.reason.blockerId))!
      const end = pred.status === 'done' ? pred.finishedAt : pred.plannedEnd
      if (!end) continue
      const ready = ms(end) + pred.waitAfterMinutes * 60_000
      checked++
      expect(minutesOpen(ready, ms(i.start)), `${i.jobBagNumber} ${i.name}: ${i.reason.detail}`).toBe(0)
      expect(closureBetween(ready, ms(i.start)), `${i.jobBagNumber} ${i.name}: ${i.reason.detail}`).toBe(false)
    }
    expect(checked).toBeGreaterThan(5)
  })

  it('when a bar waits for a busy person, then the reason names the step that holds them, not its kind of work', async () => {
    const board = (await manager.get(`/api/board?from=${from}&to=${to}`)).body
    const ops = new Map((await t.db.select().from(s.operations)).map((o) => [o.id, o]))
    const kinds = new Set((await t.db.select({ code: s.operationKinds.code }).from(s.operationKinds)).map((k) => k.code))
    let checked = 0
    for (const i of board.items) {
      if (i.reason?.kind !== 'person' || !i.reason.blockerId) continue
      checked++
      expect(i.reason.detail).toContain(`busy with ${ops.get(Number(i.reason.blockerId))!.name}`)
      for (const k of kinds) expect(i.reason.detail).not.toContain(`(${k})`)
    }
    expect(checked).toBeGreaterThan(0)
  })

  it('when outside work is planned to go out at the moment of planning and the board is read later, then its reason says it goes out as soon as planning allows and for how many working days', async () => {
    // Half an hour after the plan was made: the moment it was made has passed.
    const readAt = Date.now() + 30 * 60_000
    const board = await freshBoard(new Date(readAt))
    const leadDays = new Map((await t.db.select().from(s.operations)).map((o) => [o.id, o.leadDays]))
    const outside = board.items.filter((i) => i.outside && i.status !== 'done' && i.status !== 'running' && i.reason)
    expect(outside.length).toBeGreaterThan(0)
    for (const i of outside) {
      expect(i.reason!.detail, `${i.jobBagNumber} ${i.name}`).not.toContain('outside working time')
      // Outside work that waits for the workshop to open goes out at opening time: no reason says it leaves at midnight.
      expect(i.reason!.detail, `${i.jobBagNumber} ${i.name}`).not.toMatch(/\b00:00\b/)
      expect(i.reason!.detail, `${i.jobBagNumber} ${i.name}`).toMatch(new RegExp(`out for ${Math.max(1, leadDays.get(i.id)!)} working days?`))
      // The details panel's estimate reads the working days away from the bar (the step's own record, not 0 minutes).
      if (leadDays.get(i.id)! > 0) expect(i.outsideDays, `${i.jobBagNumber} ${i.name}`).toBe(leadDays.get(i.id))
    }
    // Casting goes out at once only when the plan is made in working hours (at night or at the weekend it leaves at the next
    // opening, after the board is read); whatever went out before the reading says it went as soon as planning allowed.
    const atOnce = outside.filter((i) => ms(i.start) < readAt)
    for (const i of atOnce)
      expect(i.reason, `${i.jobBagNumber} ${i.name}`).toMatchObject({ kind: 'now', detail: expect.stringMatching(/^goes out as soon as planning allows/) })
  })

  /** A bar on the board with one predecessor step (not finished), on `benchId` when given, and that predecessor. */
  async function barWithOnePredecessor(benchId?: number) {
    const board = await freshBoard()
    const ops = await t.db.select().from(s.operations)
    for (const i of board.items) {
      if (i.outside || i.status === 'done' || i.status === 'running' || i.pinned || (benchId && i.benchId !== benchId)) continue
      const op = ops.find((o) => o.id === i.id)!
      if (op.after.length !== 1) continue
      const pred = ops.find((o) => o.jobBagId === op.jobBagId && o.key === op.after[0])!
      if (['done', 'skipped', 'running'].includes(pred.status)) continue
      return { bar: op, pred, board }
    }
    throw new Error('the demo board has no bar with one open predecessor')
  }
  /** The closed stretch (nights, weekends and closures merged) of the board's calendar that holds the moment x. */
  const closedAround = (board: { nonWorking: { start: string; end: string }[] }, x: number) => board.nonWorking.find((n) => ms(n.start) <= x && x < ms(n.end))!
  const move = (id: number, start: number, end: number) =>
    t.db
      .update(s.operations)
      .set({ plannedStart: new Date(start).toISOString(), plannedEnd: new Date(end).toISOString() })
      .where(eq(s.operations.id, id))

  it('when a bar waits from its predecessor’s end over the stocktake closure, then its reason names the closure, not the predecessor', async () => {
    const [closure] = await t.db.select().from(s.closures).where(eq(s.closures.name, 'Workshop closed: stocktake'))
    const { bar, pred, board } = await barWithOnePredecessor()
    // By hand: the predecessor ends at the workshop's last close before the stocktake day, the bar starts at its first opening
    // after it; between them only closed hours and the closure (the board's own calendar), so the closure held it last.
    const gap = closedAround(board, dayjs.tz(`${closure!.startsOn} 12:00`, TZ).valueOf())
    await move(pred.id, ms(gap.start) - 30 * 60_000, ms(gap.start))
    await move(bar.id, ms(gap.end), ms(gap.end) + 20 * 60_000)
    const after = (await freshBoard()).items.find((i) => i.id === bar.id)!
    expect(after.reason?.kind).toBe('working-time')
    expect(after.reason?.detail).toContain(`closed on ${dayjs(closure!.startsOn).format('ddd D MMM')} (Workshop closed: stocktake)`)
    expect(after.reason?.detail).not.toMatch(/^waiting for/)
  })

  it('when a bar on the polishing bench waits from its predecessor’s end through the bench’s service, then its reason names the service', async () => {
    const [down] = await t.db.select().from(s.benchDowntime)
    const { bar, pred, board } = await barWithOnePredecessor(down!.benchId)
    // By hand: the predecessor ends an hour into the service; the service ends at the lunch break, and the bar starts when the
    // workshop opens after it (or at the service's end when the workshop is open then). Nothing else of the bar's person ends then.
    const end = ms(down!.endsAt)
    const lunch = board.nonWorking.find((n) => ms(n.start) === end)
    const start = lunch ? ms(lunch.end) : end
    await move(pred.id, ms(down!.startsAt), ms(down!.startsAt) + 60 * 60_000)
    await move(bar.id, start, start + 20 * 60_000)
    const others = (await freshBoard()).items
    const held = others.filter((i) => i.id !== bar.id && i.personId === bar.plannedPersonId && [end, start].includes(ms(i.end)))
    for (const i of held) await move(i.id, start + 60 * 60_000, start + 80 * 60_000)
    const after = (await freshBoard()).items.find((i) => i.id === bar.id)!
    expect(after.reason?.kind).toBe('working-time')
    expect(after.reason?.detail).toContain(`out of use until ${dayjs(down!.endsAt).tz(TZ).format('ddd D MMM HH:mm')} (${down!.reason})`)
  })
})

describe('running outside work on the board', () => {
  it('when a casting has been sent out, then its bar says so, with its working days, not that it is worked on at a bench', async () => {
    const item = (await freshBoard()).items.find((i) => i.outside && i.status !== 'done' && i.status !== 'running')!
    expect(item).toBeTruthy()
    await t.db.update(s.operations).set({ status: 'running' }).where(eq(s.operations.id, item.id))
    const after = (await freshBoard()).items.find((i) => i.id === item.id)!
    expect(after.reason?.kind).toBe('fixed')
    expect(after.reason?.detail).toMatch(/^sent out .*; out for \d+ working days?, back by the end of /)
  })
})
