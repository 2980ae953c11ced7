// The board's days in Chromium: every day shown has its heading and its hour ticks alike (a closed day stays as a narrow marked
// column when working hours are folded), and a bar dragged across a folded weekend lands where it is dropped.
import { describe, expect, it } from 'vitest'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import isoWeek from 'dayjs/plugin/isoWeek'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { barBox, screenshot, signInPage, useE2E, call, publishPlan, boardSettled, boardHeadings } from '../setup/e2e'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

const TZ = 'Europe/London'
const e2e = useE2E()

describe('days on the board', () => {
  it('when the week of the stocktake is shown folded, then each weekday has its heading, the closed one marked, and open days tick alike', async () => {
    const [stocktake] = await e2e.db.db.select().from(s.closures).where(eq(s.closures.name, 'Workshop closed: stocktake'))
    expect(stocktake, 'the demo has a stocktake day').toBeTruthy()
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    await boardSettled(manager)
    // The board opens on this week, or on the next one while the workshop is shut for the weekend: its first heading says which.
    await expect.poll(async () => (await boardHeadings(manager)).length, { timeout: 10_000 }).toBe(5)
    const openMonday = (await boardHeadings(manager))[0]!.day
    expect(dayjs(openMonday).isoWeekday(), 'the week view starts on a Monday').toBe(1)
    // Step on from there to the stocktake's week.
    const weeks = dayjs(stocktake!.startsOn).startOf('isoWeek').diff(openMonday, 'week')
    expect(weeks, 'the stocktake is not before the week the board opens on').toBeGreaterThanOrEqual(0)
    for (let i = 0; i < weeks; i++) await manager.locator('[data-test=board-next]').click()
    const monday = dayjs(stocktake!.startsOn).startOf('isoWeek')
    const weekdays = [0, 1, 2, 3, 4].map((d) => monday.add(d, 'day').format('YYYY-MM-DD'))
    await expect.poll(async () => (await boardHeadings(manager)).map((h) => h.day), { timeout: 10_000 }).toEqual(weekdays)
    const shown = await boardHeadings(manager)
    const closures = await e2e.db.db.select().from(s.closures)
    const isClosed = (day: string) => closures.some((c) => c.startsOn <= day && day <= c.endsOn)
    for (const h of shown) expect(h.closed, h.day).toBe(isClosed(h.day))
    expect(shown.find((h) => h.day === stocktake!.startsOn)!.closed).toBe(true)
    // Open days: the same ticks, from the 08:30 opening.
    const open = shown.filter((h) => !h.closed)
    expect(open.length).toBeGreaterThan(1)
    for (const h of open) {
      expect(h.ticks[0], h.day).toBe('08:30')
      expect(h.ticks, h.day).toEqual(open[0]!.ticks)
    }
    // The heading sits over the closed day's shading on the rows (both placed on the folded scale).
    const stocktakeBox = await manager.locator('.vis-item.vis-background.board-bg-closure', { hasText: 'Workshop closed: stocktake' }).boundingBox()
    expect(Math.abs(stocktakeBox!.x - shown.find((h) => h.day === stocktake!.startsOn)!.x)).toBeLessThan(1.5)
    await screenshot(manager, 'board-days-01-stocktake-week', { fullPage: false })
    // The closure's name shows on its rows where the day is wide enough to read it…
    const label = manager.locator('.vis-item.board-bg-closure .board-bg-label', { hasText: 'Workshop closed: stocktake' }).first()
    await expect.poll(() => label.isVisible(), { timeout: 10_000 }).toBe(true)
    // …and not in four weeks, where a closed day is a narrow strip (a clipped "W…" told nothing; the heading's tooltip names it).
    await manager.locator('[data-test=board-zoom]').getByText('Four weeks', { exact: true }).click()
    await boardSettled(manager)
    const strip = manager.locator('.vis-item.vis-background.board-bg-closure', { hasText: 'Workshop closed: stocktake' }).first()
    await expect.poll(async () => (await strip.boundingBox())?.width ?? Infinity, { timeout: 10_000 }).toBeLessThan(40)
    await expect.poll(() => label.isVisible(), { timeout: 10_000 }).toBe(false)
    expect(await label.count(), 'the label is still there, only not shown').toBe(1)
    await screenshot(manager, 'board-days-01b-stocktake-four-weeks', { fullPage: false })
    await manager.locator('[data-test=board-zoom]').getByText('Week', { exact: true }).click()
    await boardSettled(manager)

    // The whole clock, back on the week the board opened on: Monday is named from the left edge, and every day of the week, the
    // weekend too, has its heading.
    await manager.locator('[data-test=board-fold]').click()
    await manager.locator('[data-test=board-today]').click()
    const thisMonday = dayjs(openMonday)
    await expect
      .poll(async () => (await boardHeadings(manager)).map((h) => h.day), { timeout: 10_000 })
      .toEqual([0, 1, 2, 3, 4, 5, 6].map((d) => thisMonday.add(d, 'day').format('YYYY-MM-DD')))
    const panel = (await manager.locator('.vis-panel.vis-center').boundingBox())!
    const mon = (await boardHeadings(manager))[0]!
    expect(Math.abs(mon.x - panel.x)).toBeLessThan(1.5)
    await expect(manager.locator(`[data-test=board-day][data-day="${mon.day}"]`).textContent()).resolves.toContain(String(thisMonday.date()))
    await screenshot(manager, 'board-days-02-whole-clock', { fullPage: false })
    await ctx.close()
  })

  it('when a bar is dragged from before a folded weekend to 10:30 on the Monday after it, then the move asks for 10:30 that Monday', async () => {
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    await publishPlan(manager)
    await manager.goto('/plan')
    await boardSettled(manager)
    await manager.locator('[data-test=board-zoom]').getByText('Four weeks', { exact: true }).click()
    await boardSettled(manager)
    await manager.waitForFunction(() => /^W\d\d–W\d\d/.test(document.querySelector('[data-test=board-range]')?.textContent?.trim() ?? ''))
    await boardSettled(manager)

    // The board's own data (the window the board loads: four weeks from this Monday), to read the bars and the closed hours.
    const from = dayjs().tz(TZ).startOf('isoWeek').format('YYYY-MM-DD')
    const board = (await call(manager, 'GET', `/api/board?from=${from}&to=${dayjs(from).add(27, 'day').format('YYYY-MM-DD')}`)).body
    // Shown time between two instants, reckoned here: clock time less the closed stretches of 4 h or more (nights, weekends), which
    // "working hours only" folds away.
    const folds = (board.nonWorking as { start: string; end: string }[])
      .map((x) => ({ start: Date.parse(x.start), end: Date.parse(x.end) }))
      .filter((x) => x.end - x.start >= 4 * 3_600_000)
    const shownMs = (a: number, b: number) => b - a - folds.reduce((t, f) => t + Math.max(0, Math.min(b, f.end) - Math.max(a, f.start)), 0)
    // Bars on screen, with where they start on the board and on screen.
    // `grab`: how far in from its start the bar is taken hold of — 5 px, or 5 px into a piece of a bar split by a pause, whose
    // hollow stretch between pieces lets the pointer through to what lies below.
    const onScreen: { id: number; start: number; x: number; y: number; width: number; grab: number; movable: boolean }[] = []
    for (const el of await manager.locator('.vis-item.board-bar:not(.board-bar--outside)').all()) {
      const id = Number(await el.getAttribute('data-id'))
      const item = board.items.find((i: { id: number }) => i.id === id)
      const box = await barBox(manager, id)
      if (!item || !box || box.width < 4) continue
      const cls = (await el.getAttribute('class'))!
      // The bar (or the piece) dragged is at least 10 px wide and grabbed 5 px in: a narrower one is mostly its edges, where a
      // drag would stretch it rather than move it.
      let grab = box.width >= 10 ? 5 : null
      if (cls.includes('board-bar--split')) {
        const pieces = await Promise.all((await el.locator('[data-test=board-bar-piece]').all()).map((p) => p.boundingBox()))
        const wide = pieces.find((p) => p && p.width >= 10)
        grab = wide ? wide.x - box.x + 5 : null
      }
      const movable = !cls.includes('board-bar--fixed') && grab !== null
      onScreen.push({ id, start: Date.parse(item.start), x: box.x, y: box.y + box.height / 2, width: box.width, grab: grab ?? 0, movable })
    }
    const closedDays = (board.closures as { startsOn: string; endsOn: string }[]).flatMap((c) => {
      const out: string[] = []
      for (let d = dayjs(c.startsOn); !d.isAfter(dayjs(c.endsOn)); d = d.add(1, 'day')) out.push(d.format('YYYY-MM-DD'))
      return out
    })
    // A movable bar on a weekday, and a bar on the Monday after its weekend as a landmark, with no closed day between them.
    let pick: { bar: (typeof onScreen)[number]; mark: (typeof onScreen)[number]; monday: string } | null = null
    for (const bar of onScreen.filter((b) => b.movable)) {
      const day = dayjs(bar.start).tz(TZ)
      const monday = day.startOf('isoWeek').add(7, 'day').format('YYYY-MM-DD')
      if (closedDays.some((d) => d > day.format('YYYY-MM-DD') && d <= monday)) continue
      const mark = onScreen.find((b) => dayjs(b.start).tz(TZ).format('YYYY-MM-DD') === monday)
      if (mark) {
        pick = { bar, mark, monday }
        break
      }
    }
    expect(pick, 'a movable bar before a weekend, and a bar on the Monday after it').toBeTruthy()
    const { mark: marked, monday } = pick!
    const id = pick!.bar.id
    // The board may lay itself out again after the bars were measured (a live refresh after other changes to the workshop):
    // once it is quiet, both bars are measured again where they are now.
    await manager.waitForLoadState('networkidle')
    await manager.waitForTimeout(500)
    const again = async (b: (typeof onScreen)[number]) => {
      const box = (await barBox(manager, b.id))!
      return { ...b, x: box.x, y: box.y + box.height / 2, width: box.width }
    }
    const bar = await again(pick!.bar)
    const mark = await again(marked)
    // Pixels per shown hour from the two bars; then Monday 10:30 is placed from the Monday bar's start.
    const pxPerMs = (mark.x - bar.x) / shownMs(bar.start, mark.start)
    const target = dayjs.tz(`${monday} 10:30`, TZ).valueOf()
    const grabX = bar.x + bar.grab
    const y = bar.y
    const dropX = mark.x + (target < mark.start ? -shownMs(target, mark.start) : shownMs(mark.start, target)) * pxPerMs + bar.grab
    // What takes the pointer where the bar is grabbed must be the bar itself, or the drag pans the board instead.
    const under = await manager.evaluate(
      ([x, yy]) => {
        const el = document.elementFromPoint(x, yy) as HTMLElement | null
        return el?.closest<HTMLElement>('.vis-item')?.dataset.id ?? el?.className ?? null
      },
      [grabX, y] as const,
    )
    expect(under, `what lies under the grab point of bar ${id} at x ${grabX}, y ${y}`).toBe(String(id))
    const asked = manager.waitForRequest((r) => r.method() === 'PATCH' && r.url().endsWith(`/api/board/operations/${id}`), { timeout: 15_000 })
    // (The shading of someone's hours off or a closure can lie over the bar where it is grabbed: it must not take the pointer.)
    await manager.mouse.move(grabX, y)
    await manager.mouse.down()
    await manager.mouse.move(grabX + 20, y, { steps: 4 })
    await manager.mouse.move(dropX, y, { steps: 20 })
    await manager.mouse.up()
    const start = (
      await asked.catch(async (e: Error) => {
        // No move asked for: keep what the board showed, and where the drag went, for whoever reads the failure.
        await screenshot(manager, 'board-days-03-drag-without-move', { fullPage: false })
        const refusal = await manager
          .locator('[data-test=board-refusal]')
          .textContent({ timeout: 1000 })
          .catch(() => null)
        throw new Error(`${e.message} — bar ${id} dragged from x ${grabX} to ${dropX} at y ${y}; refusal: ${refusal ?? 'none'}`)
      })
    ).postDataJSON().start as string
    // 08:30 + 2 h = 10:30 on that Monday; a pixel is about a quarter of an hour at this width, so within 20 minutes.
    expect(Math.abs(Date.parse(start) - target), `asked for ${dayjs(start).tz(TZ).format('ddd D MMM HH:mm')}`).toBeLessThanOrEqual(20 * 60_000)
    await screenshot(manager, 'board-days-03-four-weeks', { fullPage: false })
    await ctx.close()
  })
})
