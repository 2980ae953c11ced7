// The planning board in Chromium: the manager runs the planner, publishes, is refused a drop on a bench that cannot host the step, moves a bar; sales watches it live.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { barBox, screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()

interface Bar {
  id: number
  kind: string
  name: string
  jobBagId: number
  jobBagNumber: string
  benchId: number | null
  personId: number | null
  start: string
  end: string
  status: string
  outside: boolean
  version: number
}

const rendered = (page: Page) => page.locator('[data-test=board-timeline][data-rendered=true]').waitFor({ timeout: 20_000 })

/** The board data as the page's own session sees it. */
async function boardOf(page: Page): Promise<{ items: Bar[]; benches: { id: number; name: string }[]; window: { from: string; to: string } }> {
  return page.evaluate(async () => {
    const from = new Date(Date.now() - 3 * 86_400_000).toISOString().slice(0, 10)
    const to = new Date(Date.now() + 24 * 86_400_000).toISOString().slice(0, 10)
    return (await fetch(`/api/board?from=${from}&to=${to}`, { credentials: 'same-origin' })).json()
  })
}

/** A write through the page's session (CSRF token from GET /api/session). */
async function patchAs(page: Page, path: string, body: unknown): Promise<{ status: number; body: any }> {
  return page.evaluate(
    async ({ path, body }) => {
      const { csrfToken } = await (await fetch('/api/session', { credentials: 'same-origin' })).json()
      const r = await fetch(path, {
        method: 'PATCH',
        credentials: 'same-origin',
        headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken },
        body: JSON.stringify(body),
      })
      return { status: r.status, body: await r.json() }
    },
    { path, body },
  )
}

const boxOf = barBox
/** Where a bar starts on screen, wherever it ends (null when it is not drawn). */
async function barX(page: Page, id: number) {
  const el = page.locator(`.vis-item.board-bar[data-id="${id}"]`)
  return (await el.count()) ? ((await el.boundingBox())?.x ?? null) : null
}

/** The vertical middle of a row, by its label. */
async function rowMiddle(page: Page, label: string) {
  const box = await page.locator('.vis-labelset .vis-label', { hasText: label }).first().boundingBox()
  return box!.y + box!.height / 2
}

async function rowOfY(page: Page, y: number): Promise<string | null> {
  return page.evaluate((y) => {
    for (const el of document.querySelectorAll('.vis-labelset .vis-label')) {
      const r = el.getBoundingClientRect()
      if (y >= r.top && y <= r.bottom) return el.querySelector('.board-row__name')?.textContent ?? null
    }
    return null
  }, y)
}

/**
 * Moves the last step of some job bag later in the same week through the API (as the manager); returns it and where sales drew it before.
 * Late in the week the demo plan may leave no room before Friday: then sales steps on a week (up to three) and tries the bars
 * there; `stepped` says how many weeks sales moved on.
 */
async function moveOneDayLater(manager: Page, sales: Page) {
  const tried: string[] = []
  for (let stepped = 0; stepped <= 3; stepped++) {
    if (stepped > 0) {
      await sales.locator('[data-test=board-next]').click()
      await rendered(sales)
    }
    const moved = await tryMovesInView(manager, sales, tried)
    if (moved) {
      console.log(`[board] moved a bar after ${tried.length} refusals, ${stepped} week(s) on; first refusals: ${tried.slice(0, 6).join(' | ')}`)
      return { ...moved, stepped }
    }
  }
  throw new Error(`no step could move within the week on screen: ${tried.slice(0, 5).join(' | ')}`)
}

async function tryMovesInView(manager: Page, sales: Page, tried: string[]) {
  const board = await boardOf(manager)
  const lastOfBag = new Map<number, Bar>()
  for (const b of board.items) if (!b.outside && (!lastOfBag.get(b.jobBagId) || lastOfBag.get(b.jobBagId)!.end < b.end)) lastOfBag.set(b.jobBagId, b)
  // Last steps of their job bags first (nothing after them to collide with), then any other bar the server may accept.
  const order = [...lastOfBag.values(), ...board.items.filter((i) => !i.outside && lastOfBag.get(i.jobBagId)?.id !== i.id)]
  for (const b of order) {
    // Not running and not about to start: the bar is later put back where it was, which must still be in the future.
    if (b.status === 'running' || new Date(b.start).getTime() < Date.now() + 30 * 60_000) continue
    const box = await boxOf(sales, b.id)
    if (!box || box.width < 8) continue
    // Later the same week (Friday evening at the latest), so the bar stays on screen. First where the board shows room:
    // right after another booking of its bench or person, when nothing else on either starts before the bar would end
    // (the server still judges working time and routing order). Then a day or a few hours later or earlier.
    const t = (x: string) => new Date(x).getTime()
    const length = t(b.end) - t(b.start)
    const sharing = board.items.filter(
      (i) => i.id !== b.id && !i.outside && ((b.benchId !== null && i.benchId === b.benchId) || (b.personId !== null && i.personId === b.personId)),
    )
    const gaps = sharing
      .map((i) => t(i.end))
      .filter((at) => Math.abs(at - t(b.start)) >= 3_600_000 && !sharing.some((j) => t(j.start) < at + length && t(j.end) > at))
    const nudges = [24, 48, 26, 4, 6, 28, 50, 2, 72, 3, 8, 30, 1, -1, -2, -3, -4, -6, -24, -26].map((h) => t(b.start) + h * 3_600_000)
    // Steps with a successor only where the board shows room (a nudge would mostly run into the successor).
    for (const at of [...gaps.sort((x, y) => x - y), ...(lastOfBag.get(b.jobBagId)?.id === b.id ? nudges : [])]) {
      const start = new Date(at)
      const weekday = start.getUTCDay()
      if (weekday === 0 || weekday === 6 || (weekday === 5 && start.getUTCHours() >= 14)) continue
      if (start.getTime() < Date.now() + 30 * 60_000) continue
      // Same week as the bar (the screens show one week), so the moved bar stays in view.
      const monday = (d: Date) => Math.floor((d.getTime() / 86_400_000 + 3) / 7)
      if (monday(start) !== monday(new Date(b.start))) continue
      const r = await patchAs(manager, `/api/board/operations/${b.id}`, { start: start.toISOString(), version: b.version })
      // Timed from the moment the save answered: what follows is the event, the debounce and the reload.
      // A drop in a break starts at the next working time: count only a move that really shifted the bar by an hour or more.
      // It must also still start in the week on screen (a drop late on Friday may be carried over the weekend).
      if (
        r.status === 200 &&
        Math.abs(new Date(r.body.start).getTime() - new Date(b.start).getTime()) >= 3_600_000 &&
        monday(new Date(r.body.start)) === monday(new Date(b.start))
      )
        return { bar: b, x: box.x, at: Date.now(), version: r.body.version as number }
      if (r.status === 200 && monday(new Date(r.body.start)) !== monday(new Date(b.start))) {
        // Carried out of the week: put it back where it was and try the next place.
        const back = await patchAs(manager, `/api/board/operations/${b.id}`, { start: b.start, version: r.body.version })
        expect(back.status, JSON.stringify(back.body)).toBe(200)
        b.version = back.body.version
        continue
      }
      if (r.status === 200) {
        b.version = r.body.version
        b.start = r.body.start
        continue
      }
      expect(r.status, JSON.stringify(r.body)).toBe(422)
      tried.push(r.body.error)
    }
  }
  return null
}

describe('the planning board', () => {
  it('when the manager plans, publishes and moves bars, then refusals are explained and sales sees the change live', async () => {
    const managerCtx = await e2e.newContext()
    const salesCtx = await e2e.newContext()
    const manager = await signInPage(managerCtx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')

    // Nothing planned yet in the demo workshop: the board says so and offers the planner.
    await manager.locator('[data-test=board-empty]').waitFor()
    await expect(manager.locator('[data-test=board-connection]').getAttribute('data-state')).resolves.toBe('connected')
    await screenshot(manager, 'board-01-empty')

    // Run the planner with a short budget; progress figures appear, then the draft with its moves.
    await manager.locator('[data-test=board-run]').click()
    await manager.locator('[data-test=plan-budget-2]').click()
    await manager.locator('[data-test=plan-start]').click()
    await manager
      .locator('[data-test=plan-progress-lateness]')
      .filter({ hasText: /^[\d,.]+$/ })
      .waitFor({ timeout: 10_000 })
    // The figure says what it is: hours late times priority, explained in words beside it.
    const progressText = (await manager.locator('[data-test=plan-progress]').textContent()) ?? ''
    expect(progressText).toMatch(/Hours late × priority\s*[\d,.]+ h/)
    expect(progressText).toMatch(/hours \(on the clock, nights and weekends included\) it is late times its order's priority \(1–5\), added up/)
    expect(progressText).not.toMatch(/Lateness score/i)
    // The dialog says what the search is doing in the workshop's words.
    await expect(manager.locator('[data-test=plan-stage]').textContent()).resolves.toMatch(
      /first plan from due dates|rough order, working hours set aside|reordering benches and people|laying the plan out/,
    )
    await screenshot(manager, 'board-02-planning')
    const banner = manager.locator('[data-test=draft-banner]')
    await banner.locator('[data-test=draft-moves]').waitFor({ timeout: 20_000 })
    await expect(banner.textContent()).resolves.toMatch(/newly planned/)
    // Lateness in the workshop's terms: pieces late and working time, never clock hours of weighted lateness.
    await expect(banner.textContent()).resolves.toMatch(/of \d+ pieces late/)
    await expect(banner.textContent()).resolves.not.toMatch(/weighted lateness/)
    await rendered(manager)
    await expect(manager.locator('.vis-item.board-bar--moved').count()).resolves.toBeGreaterThan(0)
    await screenshot(manager, 'board-03-draft')
    // Reloaded, the board shows the live plan again and the banner still says what the draft moves, without "Show on the board".
    await manager.reload()
    await banner.locator('[data-test=draft-moves]').waitFor({ timeout: 20_000 })
    await expect(banner.locator('[data-test=draft-moves]').textContent()).resolves.toMatch(/\d+ bars? changes?: \d+ newly planned/)
    await expect(banner.locator('[data-test=draft-show]').isVisible()).resolves.toBe(true)

    await banner.locator('[data-test=draft-publish]').click()
    // Publishing asks first and says what moves.
    const confirm = manager.locator('.el-message-box')
    await confirm.waitFor()
    await expect(confirm.textContent()).resolves.toMatch(/Publish plan 1\?.*\d+ bars change: \d+ newly planned/s)
    await screenshot(manager, 'board-03b-publish-confirm')
    await confirm.locator('button', { hasText: 'Publish' }).click()
    await banner.waitFor({ state: 'detached', timeout: 10_000 })
    await expect(manager.locator('[data-test=board-plan-line]').textContent()).resolves.toMatch(/Live plan 1, published by Sam Ottery .* of \d+ pieces late/)

    // Time to first render of the board with the demo plan: navigation until the bars are drawn (printed for whoever reads the log).
    const t0 = Date.now()
    await manager.goto('/plan')
    await rendered(manager)
    const wall = Date.now() - t0
    const mark = await manager.evaluate(() => performance.getEntriesByName('board:first-render')[0]?.startTime ?? null)
    const bars = await manager.locator('.vis-item.board-bar').count()
    console.log(
      `[board] time to first render with the demo plan: ${wall} ms wall clock (navigation → bars drawn), ${mark === null ? '?' : Math.round(mark)} ms after navigation start by the page's own mark; ${bars} bars on screen`,
    )
    // Printed only: how fast the board draws is measured by `npm run benchmark:board-render`, not asserted here (on a loaded
    // machine this took 5.4 s and failed the run for nothing the board did wrong).
    expect(bars, 'bars drawn on the published board').toBeGreaterThan(0)
    await screenshot(manager, 'board-04-published')

    // Sales opens the board read-only.
    const sales = await signInPage(salesCtx, 'sales')
    await sales.goto('/plan')
    await rendered(sales)
    await sales.locator('[data-test=board-readonly]').waitFor()
    await expect(sales.locator('[data-test=board-run]').count()).resolves.toBe(0)

    // A polishing step dropped on a setting bench: refused with the reason, and the bar goes back.
    // Well after now (a drop may nudge the time, and the past is refused for its own reason); when the demo plan has no
    // polishing in view this week (its castings still out), both screens step on to next week.
    const board = await boardOf(manager)
    const later = Date.now() + 3 * 3_600_000
    const polishing = board.items.filter((i) => i.kind === 'polishing' && i.status !== 'running' && !i.outside && new Date(i.start).getTime() > later)
    const visible = async (): Promise<Bar[]> => {
      const out: Bar[] = []
      for (const b of polishing) {
        const box = await boxOf(manager, b.id)
        if (box && box.width >= 8) out.push(b)
      }
      return out
    }
    let onScreen = await visible()
    if (onScreen.length === 0) {
      for (const page of [manager, sales]) {
        await page.locator('[data-test=board-next]').click()
        await rendered(page)
      }
      onScreen = await visible()
    }
    expect(onScreen.length, 'a polishing bar visible this week or next').toBeGreaterThan(0)
    const polish = onScreen[0]!
    const from = (await boxOf(manager, polish.id))!
    const fromRow = await rowOfY(manager, from.y + from.height / 2)
    expect(fromRow).toBe('Polishing station')
    const targetY = await rowMiddle(manager, 'Setting bench A')
    await manager.mouse.move(from.x + from.width / 2, from.y + from.height / 2)
    await manager.mouse.down()
    await manager.mouse.move(from.x + from.width / 2 + 4, from.y + from.height / 2 + 10, { steps: 4 })
    await manager.mouse.move(from.x + from.width / 2, targetY, { steps: 12 })
    await manager.mouse.up()
    const refusal = manager.locator('[data-test=board-refusal]')
    await refusal.waitFor({ timeout: 10_000 })
    await expect(refusal.textContent()).resolves.toMatch(/Setting bench A is not equipped for polishing/)
    await manager.waitForTimeout(300)
    const back = (await boxOf(manager, polish.id))!
    expect(await rowOfY(manager, back.y + back.height / 2)).toBe('Polishing station')
    await screenshot(manager, 'board-05-refused')

    // A valid move: the last step of a job bag a day later (tried in turn until one has a free slot).
    const first = await moveOneDayLater(manager, sales)
    // Sales sees it flash and shift without reloading the page.
    // (Wait for the bar itself to move; the brief flash that marks it is cosmetic and may come and go between two looks.)
    // A move of a few hours is only a few pixels at week zoom with the nights folded away: any shift counts.
    // The bar's own x, even when its new end runs past the edge of the week on screen.
    await expect.poll(async () => Math.abs(((await barX(sales, first.bar.id)) ?? first.x) - first.x), { timeout: 5000, interval: 50 }).toBeGreaterThan(2)
    const liveMs = Date.now() - first.at
    console.log(`[board] sales saw the move ${liveMs} ms after the manager saved it`)
    expect(liveMs).toBeLessThan(3000)
    await screenshot(sales, 'board-06-sales-live')

    // Sales drops off the network; a move made meanwhile arrives after the reconnect by catch-up (changes:since), without a page reload.
    const framesSent: string[] = []
    // The reconnect may start on HTTP long-polling before upgrading: watch both.
    sales.on('websocket', (ws) => ws.on('framesent', (f) => framesSent.push(String(f.payload))))
    sales.on('request', (r) => {
      if (r.url().includes('/socket.io/') && r.method() === 'POST') framesSent.push(r.postData() ?? '')
    })
    await sales.evaluate(() => {
      ;(window as unknown as { sameDocument: boolean }).sameDocument = true
    })
    await salesCtx.setOffline(true)
    await sales
      .locator('[data-test=board-connection][data-state=offline], [data-test=board-connection][data-state=reconnecting]')
      .first()
      .waitFor({ timeout: 10_000 })
    await screenshot(sales, 'board-07-sales-offline')
    // Meanwhile the manager puts the moved bar back where it was: its old place is free, whatever the week's load.
    const movedX = (await barX(sales, first.bar.id))!
    const putBack = await patchAs(manager, `/api/board/operations/${first.bar.id}`, { start: first.bar.start, version: first.version })
    expect(putBack.status, JSON.stringify(putBack.body)).toBe(200)
    expect(putBack.body.start).toBe(first.bar.start)
    const second = { bar: first.bar, x: movedX }
    await sales.waitForTimeout(600)
    expect(await barX(sales, second.bar.id)).toBe(second.x)
    await salesCtx.setOffline(false)
    await sales.locator('[data-test=board-connection][data-state=connected]').waitFor({ timeout: 20_000 })
    await sales.waitForFunction(
      ({ id, x }) => {
        const el = document.querySelector(`.vis-item.board-bar[data-id="${id}"]`)
        // Any shift: a move of a few hours is a few pixels at week zoom with the nights folded away.
        return !!el && Math.abs(el.getBoundingClientRect().x - x) > 2
      },
      { id: second.bar.id, x: second.x },
      { timeout: 10_000 },
    )
    expect(
      framesSent.some((f) => f.includes('changes:since')),
      'asked for the missed events',
    ).toBe(true)
    await expect(sales.evaluate(() => (window as unknown as { sameDocument?: boolean }).sameDocument)).resolves.toBe(true)
    // Back to the week with the polishing bar, when sales stepped on to find room for the moves.
    for (let i = 0; i < first.stepped; i++) {
      await sales.locator('[data-test=board-prev]').click()
      await rendered(sales)
    }

    // Details and pinning through the board.
    await manager.locator(`.vis-item.board-bar[data-id="${polish.id}"]`).click()
    const details = manager.locator('[data-test=bar-details]')
    await details.waitFor()
    await expect(details.textContent()).resolves.toMatch(/Polishing/)
    await details.locator('[data-test=bar-pin]').click()
    await manager.locator(`.vis-item.board-bar--pinned[data-id="${polish.id}"]`).waitFor({ timeout: 5000 })
    await sales.locator(`.vis-item.board-bar--pinned[data-id="${polish.id}"]`).waitFor({ timeout: 5000 })
    await expect(details.textContent()).resolves.toMatch(/Polishing lathe: no gloves/)
    await manager.locator(`.vis-item.board-bar[data-id="${polish.id}"]`).hover()
    await manager.locator('[data-test=bar-tooltip]').waitFor()
    await screenshot(manager, 'board-08-details')

    // Rows by person and colour by state.
    await manager.locator('[data-test=board-rows]').getByText('People').click()
    await manager.locator('[data-test=board-colour]').getByText('State').click()
    await manager.locator('.vis-labelset .vis-label', { hasText: 'Ines Harrowby' }).waitFor()
    await screenshot(manager, 'board-09-people')

    // The week load: planned against available hours; a cell lists its operations.
    await manager.locator('[data-test=board-tab]').getByText('Week load').click()
    const table = manager.locator('[data-test=load-table]')
    await table.waitFor()
    await expect(table.textContent()).resolves.toMatch(/Stone setting/)
    const busy = table
      .locator('td.load__cell')
      .filter({ hasText: /^[1-9]\d*:\d\d \/ / })
      .first()
    await busy.click()
    await manager.locator('[data-test=load-picked] li').first().waitFor()
    await screenshot(manager, 'board-10-load')

    // Versions: the published plan with who and when.
    await manager.locator('[data-test=board-versions]').click()
    await manager
      .locator('[data-test=plan-version-1]')
      .filter({ hasText: /Published by Sam Ottery/ })
      .waitFor()
    await screenshot(manager, 'board-11-versions')

    await managerCtx.close()
    await salesCtx.close()
  })
})
