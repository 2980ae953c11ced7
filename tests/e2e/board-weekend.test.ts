// Weekends on the board in Chromium: with the whole clock the week shows Saturday and Sunday with their headings and hour ticks,
// shaded as hours off; with working hours only an empty weekend folds away, and a Saturday someone works — by their own hours,
// or with a step planned on it — comes back with its heading, and the step's bar is on screen.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import isoWeek from 'dayjs/plugin/isoWeek'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { planStep, readyBenchStep } from '../setup/fixtures'
import { call, screenshot, signInPage, useE2E, boardSettled, boardHeadings } from '../setup/e2e'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

const TZ = 'Europe/London'
const e2e = useE2E()

const days = (monday: string, n: number) => Array.from({ length: n }, (_, i) => dayjs(monday).add(i, 'day').format('YYYY-MM-DD'))

/** The board opened afresh, stepped on to the week of `monday` (on a Saturday someone works, it opens on that Saturday's week). */
async function openBoard(page: Page, monday: string) {
  await page.goto('/plan')
  await boardSettled(page)
  await expect.poll(async () => (await boardHeadings(page)).length, { timeout: 10_000 }).toBeGreaterThan(0)
  for (let i = 0; i < 2 && (await boardHeadings(page))[0]!.day < monday; i++) {
    await page.locator('[data-test=board-next]').click()
    await boardSettled(page)
  }
}

describe('weekends on the board', () => {
  it('when working hours are folded, then an empty weekend folds away, and a Saturday someone works — by their own hours or with a step planned on it — shows with its heading and the bar on screen', async () => {
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    await boardSettled(manager)
    // The demo workshop works Monday to Friday: the week the board opens on (read from its first heading) shows five days.
    await expect.poll(async () => (await boardHeadings(manager)).length, { timeout: 10_000 }).toBe(5)
    const monday = (await boardHeadings(manager))[0]!.day
    expect(dayjs(monday).isoWeekday()).toBe(1)
    expect((await boardHeadings(manager)).map((h) => h.day)).toEqual(days(monday, 5))
    const saturday = dayjs(monday).add(5, 'day').format('YYYY-MM-DD')
    await expect(manager.locator('[data-test=board-range]').textContent()).resolves.toContain(dayjs(monday).add(4, 'day').format('D MMM'))
    await screenshot(manager, 'board-weekend-01-folded-empty-weekend', { fullPage: false })

    // Someone whose own week has Saturday 09:00–13:00 (through the people screen's API), not on leave that day.
    const workshops = await e2e.db.db.select().from(s.workshops)
    const people = (await call(manager, 'GET', '/api/people')).body as {
      id: number
      version: number
      active: boolean
      leave: { startsOn: string; endsOn: string }[]
    }[]
    const who = people.find((p) => p.active && !p.leave.some((l) => l.startsOn <= saturday && saturday <= l.endsOn))!
    expect(who, 'someone not on leave that Saturday').toBeTruthy()
    const closures = await e2e.db.db.select().from(s.closures)
    expect(closures.some((c) => c.startsOn <= saturday && saturday <= c.endsOn)).toBe(false)
    const own = await call(manager, 'PATCH', `/api/people/${who.id}`, {
      version: who.version,
      weekPattern: [...workshops[0]!.weekPattern, { weekday: 6, start: '09:00', end: '13:00' }],
    })
    expect(own.status, JSON.stringify(own.body)).toBe(200)
    await openBoard(manager, monday)
    await expect.poll(async () => (await boardHeadings(manager)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 6))
    const withHours = (await boardHeadings(manager)).find((h) => h.day === saturday)!
    // Her four hours are shown from 09:00, and half a weekday's 8 h 30 min (4 / 8.5 = 0.47) about as wide.
    expect(withHours.ticks[0]).toBe('09:00')
    const wednesday = (await boardHeadings(manager))[2]!
    expect(withHours.width / wednesday.width).toBeGreaterThan(0.4)
    expect(withHours.width / wednesday.width).toBeLessThan(0.55)
    await expect(manager.locator('[data-test=board-range]').textContent()).resolves.toContain(dayjs(saturday).format('D MMM'))
    await screenshot(manager, 'board-weekend-02-saturday-hours', { fullPage: false })

    // A step planned on that Saturday 10:00–12:00 (written into the live plan as a plan made before the workshop stopped opening on
    // Saturdays would have left it), and her week back to the workshop's: Saturday stays, for the step.
    const op = await readyBenchStep(e2e.db.db)
    await planStep(e2e.db.db, op.id, {
      benchId: op.benchId,
      personId: op.personId,
      start: dayjs.tz(`${saturday} 10:00`, TZ).toDate(),
      end: dayjs.tz(`${saturday} 12:00`, TZ).toDate(),
    })
    const back = await call(manager, 'PATCH', `/api/people/${who.id}`, { version: own.body.version, weekPattern: null })
    expect(back.status, JSON.stringify(back.body)).toBe(200)
    await openBoard(manager, monday)
    await expect.poll(async () => (await boardHeadings(manager)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 6))
    const [row] = await e2e.db.db.select({ start: s.operations.plannedStart }).from(s.operations).where(eq(s.operations.id, op.id))
    expect(new Date(row!.start!).toISOString()).toBe(dayjs.tz(`${saturday} 10:00`, TZ).toISOString())
    // On screen: drawn, and inside the timeline's panel (it ends where the week shown ends, Saturday 12:00, so within a pixel).
    const drawn = manager.locator(`.vis-item.board-bar[data-id="${op.id}"]`)
    await expect.poll(async () => (await drawn.boundingBox())?.width ?? 0, { timeout: 10_000 }).toBeGreaterThan(20)
    const bar = (await drawn.boundingBox())!
    const panel = (await manager.locator('.vis-panel.vis-center').boundingBox())!
    expect(bar.x).toBeGreaterThanOrEqual(panel.x)
    expect(bar.x + bar.width).toBeLessThanOrEqual(panel.x + panel.width + 1)
    expect(bar.y).toBeGreaterThanOrEqual(panel.y)
    expect(bar.y + bar.height).toBeLessThanOrEqual(panel.y + panel.height)
    const sat = (await boardHeadings(manager)).find((h) => h.day === saturday)!
    // The bar fills the two hours kept for it: it lies under Saturday's heading (within its border's pixel or two).
    expect(bar.x).toBeGreaterThanOrEqual(sat.x - 2)
    expect(bar.x + bar.width).toBeLessThanOrEqual(sat.x + sat.width + 2)
    expect(bar.width).toBeGreaterThan(sat.width * 0.9)
    expect(sat.width / wednesday.width).toBeLessThan(0.3)
    await screenshot(manager, 'board-weekend-03-step-on-saturday', { fullPage: false })
    await ctx.close()
  })

  it('when the whole clock is shown, then the week has seven headings, Saturday and Sunday ticking like the weekdays and shaded as hours off', async () => {
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    await boardSettled(manager)
    await manager.locator('[data-test=board-fold]').click()
    await boardSettled(manager)
    const monday = await manager.evaluate(() => document.querySelector<HTMLElement>('[data-test=board-day]')?.dataset.day ?? '')
    expect(dayjs(monday).isoWeekday()).toBe(1)
    await expect.poll(async () => (await boardHeadings(manager)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 7))
    const h = await boardHeadings(manager)
    const [wednesday, saturday, sunday] = [h[2]!, h[5]!, h[6]!]
    expect(saturday.ticks.length).toBeGreaterThan(1)
    expect(saturday.ticks).toEqual(wednesday.ticks)
    expect(sunday.ticks).toEqual(wednesday.ticks)
    // Every day of the clock is as wide as another.
    expect(Math.abs(saturday.width - wednesday.width)).toBeLessThan(1.5)
    await expect(manager.locator(`[data-test=board-day][data-day="${saturday.day}"]`).textContent()).resolves.toContain('Sat')
    // Saturday midday lies in the shading of the workshop's hours off.
    const mid = saturday.x + saturday.width / 2
    const shaded = await manager.evaluate((x) => {
      return [...document.querySelectorAll<HTMLElement>('.vis-item.vis-background.board-bg-off')].some((el) => {
        const r = el.getBoundingClientRect()
        return r.x <= x && x <= r.x + r.width && r.width > 0
      })
    }, mid)
    expect(shaded, 'Saturday is shaded as hours off').toBe(true)
    await expect(manager.locator('[data-test=board-range]').textContent()).resolves.toContain(dayjs(sunday.day).format('D MMM'))
    await screenshot(manager, 'board-weekend-04-whole-clock', { fullPage: false })
    await ctx.close()
  })
})
