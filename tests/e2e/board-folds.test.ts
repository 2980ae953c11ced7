// The board's folded time in Chromium, with the browser's clock on this week's Saturday afternoon: "now" in a folded weekend is a
// marker that says so (never a line at Monday 08:30), the board opens on the coming week unless someone works that Saturday,
// a week gone by folds its weekend like this one, and four weeks name every day shown, the narrow closed ones too (a workshop
// that works Saturdays as well), from their first day shown to their last.
import { describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import isoWeek from 'dayjs/plugin/isoWeek'
import * as s from '../../server/db/schema/index'
import { boardHeadings, boardSettled, call, DEMO_EMAIL, DEMO_PASSWORD, screenshot, signInPage, signInWith, useE2E } from '../setup/e2e'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

const TZ = 'Europe/London'
const e2e = useE2E()

// This week's Monday and Saturday on the workshop's clock (the server's week, whatever day the test runs).
const monday = dayjs(dayjs().tz(TZ).format('YYYY-MM-DD')).startOf('isoWeek')
const saturday = monday.add(5, 'day').format('YYYY-MM-DD')
const days = (from: dayjs.Dayjs, n: number) => Array.from({ length: n }, (_, i) => from.add(i, 'day').format('YYYY-MM-DD'))

/** The manager's board in a browser whose clock stands at `hhmm` on this week's Saturday. */
async function boardAt(ctx: BrowserContext, hhmm: string, o: { signedIn?: boolean } = {}): Promise<Page> {
  const page = await ctx.newPage()
  await page.clock.setFixedTime(dayjs.tz(`${saturday} ${hhmm}`, TZ).toDate())
  if (o.signedIn) await page.goto('/plan')
  else await signInWith(page, DEMO_EMAIL.manager, DEMO_PASSWORD)
  await page.waitForURL((u) => u.pathname === '/plan')
  await boardSettled(page)
  return page
}

/** Each day heading of the board: its day, width, the label's text, whether the label is whole, and whether the day is closed. */
const dayLabels = (page: Page) =>
  page.evaluate(() =>
    [...document.querySelectorAll<HTMLElement>('[data-test=board-day]')].map((d) => {
      const l = d.querySelector<HTMLElement>('.board-axis__date')!
      return {
        day: d.dataset.day!,
        width: d.getBoundingClientRect().width,
        text: l.textContent!.trim(),
        whole: l.scrollWidth <= l.clientWidth,
        closed: d.classList.contains('board-axis__day--closed'),
      }
    }),
  )

/** The "now" marker's line over the rows (its middle, in page pixels) and its title, or null when there is none. */
async function nowMarker(page: Page) {
  return page.evaluate(() => {
    const line = document.querySelector<HTMLElement>('.board-now-shut')
    const tag = document.querySelector<HTMLElement>('[data-test=board-now-shut]')
    if (!line || !tag) return null
    const r = line.getBoundingClientRect()
    return { x: r.x + r.width / 2, title: tag.title }
  })
}
/** Whether the timeline's own line for now is drawn. */
const visNowShown = (page: Page) =>
  page.evaluate(() => {
    const el = document.querySelector<HTMLElement>('.vis-current-time')
    return !!el && getComputedStyle(el).display !== 'none' && el.getBoundingClientRect().height > 0
  })
const panelBox = async (page: Page) => (await page.locator('.vis-panel.vis-center').boundingBox())!
const rangeLabel = async (page: Page) => (await page.locator('[data-test=board-range]').textContent())!.trim()

describe('folded time on the board', () => {
  it('when it is Saturday 14:20 and no one works the weekend, then the board opens on the coming week, "now" is a marker saying Saturday, last week folds too, and four weeks name every day', async () => {
    const ctx = await e2e.newContext()
    const page = await boardAt(ctx, '14:20')
    const next = monday.add(7, 'day')
    await expect.poll(async () => (await boardHeadings(page)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(next, 5))
    // "Now" is before everything shown: a marker at the left edge that names Saturday, not the timeline's line at Monday 08:30.
    const said = `Now: ${dayjs(saturday).format('dddd D MMMM')} 14:20 — the workshop is shut`
    await expect.poll(async () => (await nowMarker(page))?.title ?? '', { timeout: 10_000 }).toContain(said)
    expect(Math.abs((await nowMarker(page))!.x - (await panelBox(page)).x)).toBeLessThan(2)
    await expect(page.locator('[data-test=board-legend-now-shut]').isVisible()).resolves.toBe(true)
    expect(await visNowShown(page)).toBe(false)
    await screenshot(page, 'board-folds-01-coming-week-now-shut', { fullPage: false })

    // This week: the marker at the end of Friday's last shown minute, where the week shown ends.
    await page.locator('[data-test=board-prev]').click()
    await boardSettled(page)
    await expect.poll(async () => (await boardHeadings(page)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 5))
    const friday = (await boardHeadings(page))[4]!
    await expect.poll(async () => Math.abs(((await nowMarker(page))?.x ?? 0) - (friday.x + friday.width)), { timeout: 10_000 }).toBeLessThan(2)
    expect((await nowMarker(page))!.title).toContain(said)
    expect(await visNowShown(page)).toBe(false)
    expect(await rangeLabel(page)).toContain(`– ${monday.add(4, 'day').format('D MMM YYYY')}`)
    await screenshot(page, 'board-folds-02-this-week-now-shut', { fullPage: false })

    // Last week folds its weekend like this one: Monday to Friday, named so; now is not in it.
    await page.locator('[data-test=board-prev]').click()
    await boardSettled(page)
    const last = monday.subtract(7, 'day')
    await expect.poll(async () => (await boardHeadings(page)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(last, 5))
    expect(await rangeLabel(page)).toContain(`${last.format('D MMM')} – ${last.add(4, 'day').format('D MMM YYYY')}`)
    expect(await nowMarker(page)).toBeNull()
    await screenshot(page, 'board-folds-03-last-week-folded', { fullPage: false })

    // Four weeks from the coming Monday: every day shown has a whole label, a closed day's narrow column too (the demo's stocktake
    // lies in them), and the range runs to the last Friday.
    await page.locator('[data-test=board-today]').click()
    await boardSettled(page)
    await page.locator('[data-test=board-zoom]').getByText('Four weeks', { exact: true }).click()
    await boardSettled(page)
    await expect.poll(async () => (await boardHeadings(page))[0]?.day, { timeout: 10_000 }).toBe(next.format('YYYY-MM-DD'))
    const labels = await dayLabels(page)
    const closures = await e2e.db.db.select().from(s.closures)
    const closedDays = labels.filter((l) => closures.some((c) => c.startsOn <= l.day && l.day <= c.endsOn))
    expect(closedDays.length, 'a closed day in the four weeks').toBeGreaterThan(0)
    for (const l of labels) {
      expect(l.text, l.day).toBe(String(dayjs(l.day).date()))
      expect(l.whole, `${l.day} is not clipped`).toBe(true)
    }
    expect(closedDays.every((l) => l.closed)).toBe(true)
    expect(await rangeLabel(page)).toContain(`${next.format('D MMM')} – ${next.add(25, 'day').format('D MMM YYYY')}`)
    await screenshot(page, 'board-folds-04-four-weeks', { fullPage: false })
    await ctx.close()
  })

  it('when someone works this Saturday 09:00–13:00, then at 14:20 the board opens on this week with Saturday shown and "now" marked after her hours; at 10:00 the timeline’s own line is in them', async () => {
    const ctx = await e2e.newContext()
    const setUp = await boardAt(ctx, '14:20')
    const closures = await e2e.db.db.select().from(s.closures)
    expect(closures.some((c) => c.startsOn <= saturday && saturday <= c.endsOn)).toBe(false)
    const [workshop] = await e2e.db.db.select().from(s.workshops)
    const people = (await call(setUp, 'GET', '/api/people')).body as {
      id: number
      version: number
      active: boolean
      leave: { startsOn: string; endsOn: string }[]
    }[]
    const who = people.find((p) => p.active && !p.leave.some((l) => l.startsOn <= saturday && saturday <= l.endsOn))!
    const own = await call(setUp, 'PATCH', `/api/people/${who.id}`, {
      version: who.version,
      weekPattern: [...workshop!.weekPattern, { weekday: 6, start: '09:00', end: '13:00' }],
    })
    expect(own.status, JSON.stringify(own.body)).toBe(200)
    await setUp.close()

    const page = await boardAt(ctx, '14:20', { signedIn: true })
    await expect.poll(async () => (await boardHeadings(page)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 6))
    const sat = (await boardHeadings(page))[5]!
    expect(sat.ticks[0]).toBe('09:00')
    await expect.poll(async () => Math.abs(((await nowMarker(page))?.x ?? 0) - (sat.x + sat.width)), { timeout: 10_000 }).toBeLessThan(2)
    expect((await nowMarker(page))!.title).toContain(`${dayjs(saturday).format('ddd D MMM')} 13:00 to`)
    expect(await rangeLabel(page)).toContain(`– ${dayjs(saturday).format('D MMM YYYY')}`)
    await screenshot(page, 'board-folds-05-saturday-worked-after-hours', { fullPage: false })
    await page.close()

    // In her hours, now is shown time: the timeline's own line, inside Saturday, and no marker.
    const during = await boardAt(ctx, '10:00', { signedIn: true })
    await expect.poll(async () => (await boardHeadings(during)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 6))
    expect(await nowMarker(during)).toBeNull()
    await expect.poll(() => visNowShown(during), { timeout: 10_000 }).toBe(true)
    const line = (await during.locator('.vis-current-time').boundingBox())!
    const satDuring = (await boardHeadings(during))[5]!
    expect(line.x).toBeGreaterThan(satDuring.x)
    expect(line.x).toBeLessThan(satDuring.x + satDuring.width)
    await screenshot(during, 'board-folds-06-saturday-worked-during-hours', { fullPage: false })
    await ctx.close()
  })

  it('when the workshop works Saturdays, then in four weeks every closed day is still wide enough to carry its date', async () => {
    // Open Saturdays as on Mondays: 24 open days share the width with the closed ones, which kept three hours were about 10 px
    // wide at this size, too narrow for a date of two figures.
    const office = await e2e.newContext()
    const owner = await signInPage(office, 'owner')
    const w = (await call(owner, 'GET', '/api/workshop')).body as {
      name: string
      timeZone: string
      planningLoad: number
      version: number
      weekPattern: { weekday: number; start: string; end: string }[]
    }
    const settings = (weekPattern: typeof w.weekPattern, version: number) => ({
      name: w.name,
      timeZone: w.timeZone,
      planningLoad: w.planningLoad,
      weekPattern,
      version,
    })
    const saturdays = w.weekPattern.filter((p) => p.weekday === 1).map((p) => ({ ...p, weekday: 6 }))
    const put = await call(owner, 'PUT', '/api/workshop', settings([...w.weekPattern, ...saturdays], w.version))
    expect(put.status, JSON.stringify(put.body)).toBe(200)
    const ctx = await e2e.newContext()
    try {
      const page = await boardAt(ctx, '14:20')
      // Saturday 14:20 is open time now: the board opens on this week, Saturday with its heading.
      await expect.poll(async () => (await boardHeadings(page)).map((h) => h.day), { timeout: 10_000 }).toEqual(days(monday, 6))
      await page.locator('[data-test=board-zoom]').getByText('Four weeks', { exact: true }).click()
      await boardSettled(page)
      await expect.poll(async () => (await dayLabels(page)).length, { timeout: 10_000 }).toBeGreaterThan(20)
      const closures = await e2e.db.db.select().from(s.closures)
      const isClosed = (day: string) => closures.some((c) => c.startsOn <= day && day <= c.endsOn)
      // The closed days take a moment longer: their width follows the timeline's once it is drawn.
      await expect
        .poll(async () => (await dayLabels(page)).filter((l) => l.closed).map((l) => [l.day, l.text, l.whole]), { timeout: 10_000 })
        .toEqual((await dayLabels(page)).filter((l) => isClosed(l.day)).map((l) => [l.day, String(dayjs(l.day).date()), true]))
      const labels = await dayLabels(page)
      expect(labels.filter((l) => l.closed).length, 'a closed day in the four weeks').toBeGreaterThan(0)
      expect(labels.filter((l) => dayjs(l.day).isoWeekday() === 6).length, 'Saturdays shown').toBe(4)
      for (const l of labels) {
        expect(l.text, l.day).toBe(String(dayjs(l.day).date()))
        expect(l.whole, `${l.day} is not clipped`).toBe(true)
      }
      await screenshot(page, 'board-folds-07-four-weeks-saturdays', { fullPage: false })
    } finally {
      const now = (await call(owner, 'GET', '/api/workshop')).body as { version: number }
      const back = await call(owner, 'PUT', '/api/workshop', settings(w.weekPattern, now.version))
      expect(back.status, JSON.stringify(back.body)).toBe(200)
      await ctx.close()
      await office.close()
    }
  })
})
