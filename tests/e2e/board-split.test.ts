// A part-timer's step paused over the afternoon and the night, on the board in Chromium: one bar drawn as the two stretches it
// is worked, the work planned in its pause in the same lane (the bench is not drawn double booked), and every bar of its late
// piece outlined, the one past the due date with its red end. A bench, two people and two job bags of its own, by hand.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import isoWeek from 'dayjs/plugin/isoWeek'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { screenshot, signInPage, useE2E } from '../setup/e2e'
import { WITHOUT_VAT } from '../setup/fixtures'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

const TZ = 'Europe/London'
const e2e = useE2E()

// The first Monday after today; the demo workshop works 08:30–12:30 and 13:15–17:00 on weekdays.
const monday = dayjs().tz(TZ).startOf('isoWeek').add(7, 'day')
const MON = monday.format('YYYY-MM-DD')
const at = (n: number, hm: string) => dayjs.tz(`${monday.add(n, 'day').format('YYYY-MM-DD')} ${hm}`, TZ).toISOString()
const MORNINGS = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '08:30', end: '12:30' }))
const WEEK = [1, 2, 3, 4, 5].flatMap((weekday) => [
  { weekday, start: '08:30', end: '12:30' },
  { weekday, start: '13:15', end: '17:00' },
])

/**
 * On "Split test bench": A's "Rough out" by Ada Mon 09:00–10:00; A's "Cut off and clean" (94 min) by Mo, who works mornings,
 * from Mon 12:08 — worked 12:08–12:30 (22 min) and Tue 08:30–09:42 (72 min); B's "Fit the shank" by Ada Mon 13:15–15:15, in
 * the pause. A is due on Monday, so it finishes late; its "Cut off and clean" is the bar that ends after the due date.
 */
async function handMadePlan(): Promise<{ rough: number; cut: number; fit: number }> {
  const db = e2e.db.db
  const [manager] = await db.select().from(s.users).where(eq(s.users.email, 'manager@wrenfield.test'))
  const workshopId = manager!.workshopId
  const [kind] = await db.select().from(s.operationKinds).where(eq(s.operationKinds.code, 'filing'))
  const [bench] = await db.insert(s.benches).values({ workshopId, name: 'Split test bench', kind: 'fabrication' }).returning()
  await db.insert(s.benchCapabilities).values({ benchId: bench!.id, kindId: kind!.id })
  const person = async (name: string, weekPattern: typeof WEEK) => {
    const [p] = await db.insert(s.people).values({ workshopId, name, weekPattern }).returning()
    await db.insert(s.personSkills).values({ personId: p!.id, kindId: kind!.id, level: 3, speed: 1 })
    return p!.id
  }
  const mo = await person('Mo Part', MORNINGS)
  const ada = await person('Ada Full', WEEK)
  const [customer] = await db.select().from(s.customers).where(eq(s.customers.workshopId, workshopId)).limit(1)
  const bag = async (number: string, due: string) => {
    const [o] = await db
      .insert(s.orders)
      .values({ workshopId, number, customerId: customer!.id, title: number, dueDate: due, priority: 1, ...WITHOUT_VAT })
      .returning()
    const [b] = await db
      .insert(s.jobBags)
      .values({
        workshopId,
        orderId: o!.id,
        number: `${number}-1`,
        piece: 'Split ring',
        params: { metal: 'silver-925', quantity: 1 } as never,
        status: 'in-progress',
      })
      .returning()
    return b!.id
  }
  const a = await bag('SPLIT-A', MON)
  const b = await bag('SPLIT-B', monday.add(4, 'day').format('YYYY-MM-DD'))
  const op = async (jobBagId: number, v: Partial<typeof s.operations.$inferInsert> & { key: string; name: string; estimateMinutes: number }) =>
    (
      await db
        .insert(s.operations)
        .values({ jobBagId, seq: 1, status: 'ready', kindId: kind!.id, plannedBenchId: bench!.id, ...v })
        .returning()
    )[0]!.id
  const rough = await op(a, {
    key: 'rough',
    name: 'Rough out',
    estimateMinutes: 60,
    plannedPersonId: ada,
    plannedStart: at(0, '09:00'),
    plannedEnd: at(0, '10:00'),
  })
  const cut = await op(a, {
    key: 'cut',
    seq: 2,
    name: 'Cut off and clean',
    estimateMinutes: 94,
    after: ['rough'],
    status: 'pending',
    plannedPersonId: mo,
    plannedStart: at(0, '12:08'),
    plannedEnd: at(1, '09:42'),
  })
  const fit = await op(b, {
    key: 'fit',
    name: 'Fit the shank',
    estimateMinutes: 120,
    plannedPersonId: ada,
    plannedStart: at(0, '13:15'),
    plannedEnd: at(0, '15:15'),
  })
  return { rough, cut, fit }
}

/** The board once its data is in and drawn: no "Updating…" and no request in flight. */
async function settled(page: Page) {
  await page.locator('[data-test=board-timeline][data-rendered=true]').waitFor({ timeout: 20_000 })
  await page.waitForLoadState('networkidle').catch(() => undefined)
  await page.getByText('Updating…').waitFor({ state: 'hidden', timeout: 20_000 })
}

describe('a paused step on the board', () => {
  it("when a part-timer's step pauses over the afternoon and the night, then it is one bar of two worked pieces, work in its pause shares its lane, and its late piece is outlined", async () => {
    const ids = await handMadePlan()
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.goto('/plan')
    await settled(manager)
    // Step to the week of that Monday (the board opens on today, or the day the workshop next works).
    for (let i = 0; i < 3 && !(await manager.locator(`[data-test=board-day][data-day="${MON}"]`).count()); i++) {
      await manager.locator('[data-test=board-next]').click()
      await settled(manager)
    }
    const bar = (id: number) => manager.locator(`.vis-item.board-bar[data-id="${id}"]`)
    await expect.poll(() => bar(ids.cut).isVisible(), { timeout: 10_000 }).toBe(true)
    await bar(ids.cut).scrollIntoViewIfNeeded()

    // One bar, two worked pieces: the first much narrower than the second (22 min against 72 min of shown time).
    const pieces = bar(ids.cut).locator('[data-test=board-bar-piece]')
    await expect.poll(() => pieces.count()).toBe(2)
    const [p1, p2] = [(await pieces.nth(0).boundingBox())!, (await pieces.nth(1).boundingBox())!]
    expect(p2.x).toBeGreaterThan(p1.x + p1.width)
    expect(p2.width / p1.width).toBeGreaterThan(2.5)
    expect(p2.width / p1.width).toBeLessThan(4)

    // "Fit the shank" (Mon 13:15–15:15) lies in the pause: same lane, so the same height on the row, between the pieces.
    const [cut, fit, rough] = [(await bar(ids.cut).boundingBox())!, (await bar(ids.fit).boundingBox())!, (await bar(ids.rough).boundingBox())!]
    expect(Math.abs(fit.y - cut.y)).toBeLessThan(1)
    expect(Math.abs(rough.y - cut.y)).toBeLessThan(1)
    expect(fit.x).toBeGreaterThanOrEqual(p1.x + p1.width)
    expect(fit.x + fit.width).toBeLessThanOrEqual(p2.x)

    // A finishes Tue 09:42, after its due Monday: both its bars are outlined; the one ending after the date has its red end too.
    await expect(bar(ids.rough).getAttribute('class')).resolves.toContain('board-bar--late-job')
    await expect(bar(ids.rough).getAttribute('class')).resolves.not.toContain('board-bar--past-due')
    await expect(bar(ids.cut).getAttribute('class')).resolves.toContain('board-bar--past-due')
    await expect(bar(ids.fit).getAttribute('class')).resolves.not.toContain('board-bar--late-job')
    await expect.poll(() => manager.locator('[data-test=board-legend-late]').textContent()).toContain('Piece finishing late')

    // The paused bar is still one bar: a click on its first piece selects it, and its details list both stretches.
    await manager.mouse.click(p1.x + p1.width / 2, p1.y + p1.height / 2)
    await expect.poll(() => manager.locator('[data-test=bar-details]').getAttribute('data-operation')).toBe(String(ids.cut))
    await expect.poll(() => manager.locator('[data-test=bar-details-stretches]').textContent()).toMatch(/12:08–12:30, .* 08:30–09:42/)
    // With the paused bar selected (drawn over its row), a click on the bar in its pause still reaches that bar.
    await bar(ids.fit).click({ position: { x: 10, y: 10 } })
    await expect.poll(() => manager.locator('[data-test=bar-details]').getAttribute('data-operation')).toBe(String(ids.fit))
    await screenshot(manager, 'board-split-01-paused-step')
    await ctx.close()
  })
})
