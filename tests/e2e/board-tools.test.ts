// The manager's board tools in Chromium: finished work at its actual times, finding a job bag, moving a bar by keyboard
// (accepted by exactly the step, or refused with the reason), the range label after a job at risk is focused, and the icon rail
// that gives the board the width on a tablet.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import isoWeek from 'dayjs/plugin/isoWeek'
import { eq, inArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { barBox, screenshot, signInPage, useE2E, call, publishPlan } from '../setup/e2e'
import { bookLastStepLate, firstWorkshopId, openOrder, readyBenchStep } from '../setup/fixtures'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

const TZ = 'Europe/London'
const e2e = useE2E()

interface Bar {
  id: number
  jobBagId: number
  jobBagNumber: string
  name: string
  status: string
  outside: boolean
  start: string
  end: string
  benchId: number | null
  personId: number | null
  version: number
  customerName: string
}

const rendered = (page: Page) => page.locator('[data-test=board-timeline][data-rendered=true]').waitFor({ timeout: 20_000 })

const boxOf = barBox

/** "2 h 50 min" / "45 min" / "3 h": minutes as the board writes them (worked out here, not imported). */
const hm = (min: number) => (min < 60 ? `${min} min` : min % 60 ? `${Math.floor(min / 60)} h ${min % 60} min` : `${min / 60} h`)
const clock = (at: Date | string) => dayjs(at).tz(TZ).format('ddd D MMM HH:mm')

describe("the manager's board tools", () => {
  it('when a job at risk is focused, then the toolbar names the days the timeline shows and marks no zoom; picking Week brings the week back', async () => {
    // A late job bag of our own, so the list is never empty: its last bench step booked two weeks ahead, promised two days before it ends.
    // Done before anything reads the board, so no cached board hides it. The booking walks from midnight (London) fourteen days on, so
    // its hour starts a working day and cannot straddle an evening, whatever the hour the test runs (late on a Friday it did).
    const db = e2e.db.db
    const o = await openOrder(db, 1)
    const midnight = dayjs().tz(TZ).startOf('day').add(14, 'day')
    const booked = await bookLastStepLate(db, {
      workshopId: await firstWorkshopId(db),
      orderId: o.id,
      bagId: o.bagId,
      fromMinute: Math.ceil((midnight.valueOf() - Date.now()) / 60_000),
      promised: (end) => new Date(end.getTime() - 2 * 86_400_000).toISOString().slice(0, 10),
    })
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    const late = manager.locator(`[data-test=job-risk-${o.bagNumber}]`)
    await late.waitFor()
    const range = manager.locator('[data-test=board-range]')
    const zoom = manager.locator('[data-test=board-zoom]')
    await zoom.getByText('Week', { exact: true }).click()
    // The zoom's label names weeks and dates, no weekday ("W49 · 30 Nov – 4 Dec 2026").
    await manager.waitForFunction(() => /^W\d\d · \d/.test(document.querySelector('[data-test=board-range]')?.textContent?.trim() ?? ''))
    const weekLabel = (await range.textContent())!.trim()

    await late.click()
    // Its one bar (an hour of working time, so inside one day) is all the timeline shows: that day, worked out here from the booking,
    // named by weekday as no zoom's label is; and no zoom is marked.
    const day = dayjs(booked.start).tz(TZ)
    expect(dayjs(booked.end).tz(TZ).format('YYYY-MM-DD'), 'the booked hour lies inside one day').toBe(day.format('YYYY-MM-DD'))
    const expected = `W${String(day.isoWeek()).padStart(2, '0')} · ${day.format('dddd D MMMM YYYY')}`
    await manager.waitForFunction((x) => document.querySelector('[data-test=board-range]')?.textContent?.trim() === x, expected)
    expect(expected).not.toBe(weekLabel)
    await expect(zoom.locator('.is-selected').count()).resolves.toBe(0)
    await screenshot(manager, 'board-tools-00-focused-range')

    await zoom.getByText('Week', { exact: true }).click()
    await manager.waitForFunction((w) => document.querySelector('[data-test=board-range]')?.textContent?.trim() === w, weekLabel)
    await expect(zoom.locator('.is-selected').count()).resolves.toBe(1)
    await ctx.close()
  })

  it('when a step was finished, then it shows at its actual times; a job bag is found by number or customer; keys move a bar or are refused with the reason', async () => {
    const pool = e2e.db.pool
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')

    // A finished step on the last working day before today (the demo workshop works Monday to Friday, 08:30–12:30 and 13:15–17:00):
    // two time records 09:10–10:45 and 11:05–12:20 London time, written straight into the database as the bench would have.
    let day = dayjs().tz(TZ).startOf('day').subtract(1, 'day')
    while (day.isoWeekday() > 5) day = day.subtract(1, 'day')
    const at = (hhmm: string) => dayjs.tz(`${day.format('YYYY-MM-DD')} ${hhmm}`, TZ).toISOString()
    const db = e2e.db.db
    const stepNow = async (id: number) =>
      (await db.select({ planned_start: s.operations.plannedStart, version: s.operations.version }).from(s.operations).where(eq(s.operations.id, id)))[0]!
    const op = await readyBenchStep(db)
    await db.insert(s.timeRecords).values([
      { operationId: op.id, personId: op.personId, benchId: op.benchId, startedAt: at('09:10'), endedAt: at('10:45'), endReason: 'end-of-day' },
      { operationId: op.id, personId: op.personId, benchId: op.benchId, startedAt: at('11:05'), endedAt: at('12:20'), endReason: 'finished' },
    ])
    await db
      .update(s.operations)
      .set({ status: 'done', finishedAt: at('12:20') })
      .where(eq(s.operations.id, op.id))

    // Plan and publish through the API, then open the board.
    await publishPlan(manager)
    await manager.goto('/plan')
    await rendered(manager)
    // The board opens on today, or on the day the workshop next works while it is shut (a night, a weekend): that day's week
    // may come after the finished step's, so the board steps back a week (at most twice) until the step is on it.
    const finishedBar = manager.locator(`.vis-item.board-bar[data-id="${op.id}"]`)
    let weeksBack = 0
    while (!(await finishedBar.count()) && weeksBack < 2) {
      await manager.locator('[data-test=board-prev]').click()
      weeksBack++
      await finishedBar.waitFor({ state: 'attached', timeout: 10_000 }).catch(() => undefined)
    }

    // The finished bar: hatched, not draggable, at the times the database holds.
    const done = manager.locator(`.vis-item.board-bar[data-id="${op.id}"]`)
    await done.waitFor({ state: 'attached' })
    await expect.poll(async () => (await boxOf(manager, op.id)) !== null, { timeout: 20_000, interval: 250 }).toBe(true)
    await expect(done.getAttribute('class')).resolves.toMatch(/board-bar--done.*board-bar--fixed|board-bar--fixed.*board-bar--done/)
    // Raw SQL on purpose: the worked minutes reckoned by PostgreSQL's own interval arithmetic, apart from the app's code.
    const {
      rows: [rec],
    } = await pool.query(
      `select min(started_at) as first, max(ended_at) as last, sum(extract(epoch from ended_at - started_at) / 60)::int as minutes from time_records where operation_id = $1`,
      [op.id],
    )
    // 95 + 75 = 170 min worked (hand-worked from the two records above); the database must agree.
    expect(rec.minutes).toBe(170)
    // The timeline itself is shown, not only its bars in the page (it once stayed hidden when opened right on its window).
    await expect(manager.locator('.vis-timeline').evaluate((el) => getComputedStyle(el).visibility)).resolves.toBe('visible')
    await done.hover()
    const tip = manager.locator('[data-test=bar-tooltip]')
    await tip.waitFor()
    await expect(tip.locator('[data-test=bar-tip-actual]').textContent()).resolves.toBe(
      `Finished ${clock(rec.last)} · worked ${hm(rec.minutes)} against ${hm(Math.round(op.estimate))} estimated`,
    )
    await expect(tip.locator('[data-test=bar-tip-actual-span]').textContent()).resolves.toBe(
      `Actual: ${clock(rec.first)}–${dayjs(rec.last).tz(TZ).format('HH:mm')}`,
    )
    await screenshot(manager, 'board-tools-01-finished-tooltip')
    await done.click()
    const details = manager.locator('[data-test=bar-details]')
    await expect(details.locator('[data-test=bar-details-actual]').textContent()).resolves.toContain(
      `${clock(rec.first)}–${dayjs(rec.last).tz(TZ).format('HH:mm')}`,
    )
    await expect(details.locator('[data-test=bar-details-worked]').textContent()).resolves.toBe(`${hm(rec.minutes)} in 2 time records`)
    // Keys do not move finished work either.
    await manager.keyboard.press('ArrowRight')
    await expect(manager.locator('[data-test=board-refusal]').textContent()).resolves.toMatch(/is finished; finished work stays where it happened/)
    await manager.locator('[data-test=board-refusal] .el-alert__close-btn').click()
    await manager.keyboard.press('Escape')
    await details.waitFor({ state: 'detached' })
    for (let i = 0; i < weeksBack; i++) {
      await manager.locator('[data-test=board-next]').click()
      await rendered(manager)
    }

    // Find a job bag by its number.
    const board = (
      await call(
        manager,
        'GET',
        `/api/board?from=${dayjs().tz(TZ).startOf('isoWeek').format('YYYY-MM-DD')}&to=${dayjs().tz(TZ).startOf('isoWeek').add(27, 'day').format('YYYY-MM-DD')}`,
      )
    ).body as { items: Bar[] }
    const open = board.items.filter((b) => b.status !== 'done')
    const bags = [...new Set(open.map((b) => b.jobBagId))]
    const first = open.find((b) => b.jobBagId === bags[0])!
    const search = manager.locator('input[data-test=board-search-input]')
    await search.fill(first.jobBagNumber.slice(-6))
    await manager.locator('[data-test=board-search-hit]', { hasText: first.jobBagNumber }).click()
    await manager.locator('[data-test=board-found]').filter({ hasText: first.jobBagNumber }).waitFor()
    const foundIds = await manager.locator('.vis-item.board-bar--found').evaluateAll((els) => els.map((e) => Number(e.getAttribute('data-id'))))
    expect(foundIds.length).toBeGreaterThan(0)
    expect(foundIds.every((id) => board.items.find((b) => b.id === id)?.jobBagId === first.jobBagId)).toBe(true)
    await expect(manager.locator('.vis-item.board-bar--dimmed').count()).resolves.toBeGreaterThan(0)
    await screenshot(manager, 'board-tools-02-found-by-number')

    // By its customer's name, read from the database: every hit is one of that customer's job bags.
    const other = open.find((b) => b.jobBagId === bags[bags.length - 1])!
    const cust = (
      await db
        .select({ id: s.customers.id, name: s.customers.name })
        .from(s.customers)
        .innerJoin(s.orders, eq(s.orders.customerId, s.customers.id))
        .innerJoin(s.jobBags, eq(s.jobBags.orderId, s.orders.id))
        .where(eq(s.jobBags.id, other.jobBagId))
    )[0]!
    const theirs = await db
      .select({ id: s.jobBags.id })
      .from(s.jobBags)
      .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
      .where(eq(s.orders.customerId, cust.id))
    await search.fill(cust.name)
    const hits = manager.locator('[data-test=board-search-hit]')
    await hits.first().waitFor()
    const hitBags = await hits.evaluateAll((els) => els.map((e) => Number(e.getAttribute('data-job-bag'))))
    expect(
      hitBags.every((id) => theirs.some((x: { id: number }) => x.id === id)),
      `hits ${hitBags} all of ${cust.name}`,
    ).toBe(true)
    expect(hitBags).toContain(other.jobBagId)
    await manager.locator(`[data-test=board-search-hit][data-job-bag="${other.jobBagId}"]`).click()
    await manager
      .locator('[data-test=board-found]')
      .filter({ hasText: `${other.jobBagNumber} · ${cust.name}` })
      .waitFor()
    await expect.poll(() => manager.locator(`.vis-item.board-bar--found[data-id="${other.id}"]`).count()).toBe(1)
    await screenshot(manager, 'board-tools-03-found-by-customer')
    await search.fill('Nobody Of That Name')
    await expect(manager.locator('[data-test=board-search-none]').textContent()).resolves.toBe('No job bag matches “Nobody Of That Name”.')
    await screenshot(manager, 'board-tools-04-no-match', { fullPage: false })
    await manager.locator('[data-test=board-search] .el-input__clear').click()
    await manager.locator('[data-test=board-found]').waitFor({ state: 'detached' })
    await manager.locator('[data-test=board-today]').click()
    await rendered(manager)

    // Keyboard: select a bar (focus and Enter), → moves it 15 minutes later, through the server's checks.
    const steps = await db
      .select({
        id: s.operations.id,
        key: s.operations.key,
        after: s.operations.after,
        job_bag_id: s.operations.jobBagId,
        wait_after_minutes: s.operations.waitAfterMinutes,
      })
      .from(s.operations)
      .where(
        inArray(
          s.operations.id,
          open.map((b) => b.id),
        ),
      )
    const byId = new Map<number, any>(steps.map((x) => [x.id, x]))
    const successorOf = (b: Bar) => open.find((x) => x.jobBagId === b.jobBagId && byId.get(x.id)?.after.includes(byId.get(b.id)?.key))
    const inSpan = (iso: string) => {
      // Still inside the same working span 15 minutes later (else the server starts it at the next span: not a 15-minute shift).
      const m = dayjs(iso).tz(TZ)
      const min = m.hour() * 60 + m.minute()
      return (min >= 510 && min + 15 < 750) || (min >= 795 && min + 15 < 1020)
    }
    const soon = Date.now() + 2 * 3_600_000
    const movable = open.filter((b) => !b.outside && b.status !== 'running' && Date.parse(b.start) > soon && inSpan(b.start))
    // Room after a bar: until the next work on its bench or with its person, or its successor's start less the wait between.
    const roomAfter = (b: Bar) => {
      const end = Date.parse(b.end),
        next = successorOf(b)
      let until = Infinity
      for (const x of open) {
        if (x.id === b.id || x.outside) continue
        const shares = (b.benchId !== null && x.benchId === b.benchId) || (b.personId !== null && x.personId === b.personId)
        const wait = next?.id === x.id ? (byId.get(b.id)?.wait_after_minutes ?? 0) * 60_000 : 0
        if ((shares || next?.id === x.id) && Date.parse(x.start) >= end) until = Math.min(until, Date.parse(x.start) - wait)
      }
      return until - end
    }
    // Bars with 15 minutes of room after them first (a tight plan leaves few), then last steps: nothing after them to run into.
    const tightAfter = (b: Bar) => Number(roomAfter(b) < 15 * 60_000)
    movable.sort((a, b) => tightAfter(a) - tightAfter(b) || Number(!!successorOf(a)) - Number(!!successorOf(b)))
    // Late on the last working day of a week the rest of it holds no such bar: the board steps on a week (at most twice) until
    // one is on screen.
    const showAny = async (bars: Bar[]) => {
      for (let i = 0; i < 2; i++) {
        for (const b of bars) if (await boxOf(manager, b.id)) return
        await manager.locator('[data-test=board-next]').click()
        await rendered(manager)
      }
    }
    await showAny(movable)
    const refusal = manager.locator('[data-test=board-refusal]')
    let moved: { bar: Bar; before: Date } | null = null
    const tried: string[] = []
    for (const b of movable) {
      if (!(await boxOf(manager, b.id))) continue
      await manager.locator(`.vis-item.board-bar[data-id="${b.id}"] .board-bar__body`).focus()
      await manager.keyboard.press('Enter')
      await manager.locator('[data-test=bar-details]').filter({ hasText: b.name }).waitFor()
      await manager.locator('[data-test=board-keys-hint]').waitFor()
      const row = await stepNow(b.id)
      await manager.keyboard.press('ArrowRight')
      const success = manager.locator('.el-message--success', { hasText: `of ${b.jobBagNumber} 15 min later` })
      await success.or(refusal).first().waitFor({ timeout: 10_000 })
      if (await success.count()) {
        moved = { bar: b, before: new Date(row.planned_start!) }
        break
      }
      tried.push((await refusal.textContent()) ?? '')
      await refusal.locator('.el-alert__close-btn').click()
      await manager.keyboard.press('Escape')
      if (tried.length >= 12) break
    }
    expect(moved, `a bar moved by keyboard; refusals: ${tried.join(' | ')}`).toBeTruthy()
    const after = await stepNow(moved!.bar.id)
    expect(new Date(after.planned_start!).getTime() - moved!.before.getTime()).toBe(15 * 60_000)
    await expect(manager.locator('[data-test=bar-details-planned]').textContent()).resolves.toContain(dayjs(after.planned_start).tz(TZ).format('HH:mm'))
    await screenshot(manager, 'board-tools-05-key-moved')
    await manager.keyboard.press('Escape')

    // A key move that breaks a rule: Shift+← an hour earlier on a step whose predecessor is planned to end less than an hour
    // (plus its wait) before it starts (the server names the predecessor, or first a booking of the bench or person in the
    // way). Refused with the reason, and nothing changes in the database.
    const fresh = (
      await call(
        manager,
        'GET',
        `/api/board?from=${dayjs().tz(TZ).startOf('isoWeek').format('YYYY-MM-DD')}&to=${dayjs().tz(TZ).startOf('isoWeek').add(27, 'day').format('YYYY-MM-DD')}`,
      )
    ).body.items as Bar[]
    const tight = fresh
      .filter((b) => !b.outside && b.status !== 'running' && b.status !== 'done' && Date.parse(b.start) - 3_600_000 > Date.now() + 600_000)
      .flatMap((b) => {
        const s = byId.get(b.id)
        const pred = fresh.find((p) => p.jobBagId === b.jobBagId && p.status !== 'done' && s?.after.includes(byId.get(p.id)?.key))
        return pred && Date.parse(pred.end) + byId.get(pred.id).wait_after_minutes * 60_000 > Date.parse(b.start) - 3_600_000 ? [{ b, pred }] : []
      })
    let refused: { b: Bar; pred: Bar } | null = null
    await showAny(tight.map((c) => c.b))
    for (const c of tight) {
      if (!(await boxOf(manager, c.b.id))) continue
      refused = c
      break
    }
    expect(refused, 'a step on screen whose predecessor ends less than an hour before it').toBeTruthy()
    const was = await stepNow(refused!.b.id)
    await manager.locator(`.vis-item.board-bar[data-id="${refused!.b.id}"]`).click()
    await manager.locator('[data-test=bar-details]').filter({ hasText: refused!.b.name }).waitFor()
    await manager.keyboard.press('Shift+ArrowLeft')
    await refusal.waitFor({ timeout: 10_000 })
    // The reason is the server's own for that move (the same endpoint a drag uses): asked again here through the API.
    const same = await call(manager, 'PATCH', `/api/board/operations/${refused!.b.id}`, {
      start: new Date(Date.parse(refused!.b.start) - 3_600_000).toISOString(),
      version: was.version,
    })
    expect(same.status).toBe(422)
    expect(same.body.error).toMatch(/must wait for|is booked for/)
    await expect(refusal.textContent()).resolves.toBe(`Not moved: ${refused!.b.jobBagNumber} “${refused!.b.name}”${same.body.error}`)
    const still = await stepNow(refused!.b.id)
    expect(new Date(still.planned_start!).getTime()).toBe(new Date(was.planned_start!).getTime())
    expect(still.version).toBe(was.version)
    await screenshot(manager, 'board-tools-06-key-refused')
    await ctx.close()
  })

  it("when the screen is 1024 pixels wide, then every role gets the icon rail and the board's timeline is at least 850 px wide; at 1025 the full side is back", async () => {
    for (const role of ['manager', 'owner', 'sales', 'bench'] as const) {
      const ctx = await e2e.newContext({ viewport: { width: 1024, height: 768 } })
      const page = await signInPage(ctx, role)
      const side = await page.locator('.shell__side').boundingBox()
      expect(side!.width, role).toBeLessThanOrEqual(72)
      await expect(page.locator('.shell-nav__label').first().isVisible()).resolves.toBe(false)
      if (role === 'manager') {
        await page.goto('/plan')
        await rendered(page)
        const timeline = await page.locator('[data-test=board-timeline]').boundingBox()
        expect(timeline!.width).toBeGreaterThanOrEqual(850)
        await screenshot(page, 'board-tools-07-tablet-board', { fullPage: false })
      }
      if (role === 'bench') {
        await page.goto('/bench')
        const bench = await page.locator('.bench-page').boundingBox()
        // The whole screen beside the rail.
        expect(bench!.x).toBe(side!.width)
        expect(bench!.width).toBe(1024 - side!.width)
        await screenshot(page, 'board-tools-08-tablet-bench', { fullPage: false })
      }
      await ctx.close()
    }
    const wide = await e2e.newContext({ viewport: { width: 1025, height: 768 } })
    const page = await signInPage(wide, 'manager')
    expect((await page.locator('.shell__side').boundingBox())!.width).toBeGreaterThan(200)
    await wide.close()
  })
})
