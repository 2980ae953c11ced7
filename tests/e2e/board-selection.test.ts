// A bar picked on the board in Chromium: the arrow keys then move the bar, not the toolbar switch that had the focus; on a
// tablet the bar's details come on screen.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { barBox, DEMO_EMAIL, DEMO_PASSWORD, screenshot, signInPage, signInWith, useE2E, publishPlan } from '../setup/e2e'

const e2e = useE2E()

const rendered = (page: Page) => page.locator('[data-test=board-timeline][data-rendered=true]').waitFor({ timeout: 20_000 })

/** Runs the planner briefly and publishes its draft, through the API (once for the file). */
let published: Promise<void> | null = null
const publishOnce = (page: Page) => (published ??= publishPlan(page))

/** The board once its data is in: no "Updating…" and no request in flight. */
async function settled(page: Page) {
  await rendered(page)
  await page.waitForLoadState('networkidle').catch(() => undefined)
  await page.getByText('Updating…').waitFor({ state: 'hidden', timeout: 20_000 })
}

/** A bar the manager may move, wholly on screen and clear of the edges; the board steps on a week (at most three times) until one is. */
async function movableBar(page: Page): Promise<{ id: number; start: string }> {
  for (let i = 0; i < 4; i++) {
    await settled(page)
    const panel = (await page.locator('.vis-panel.vis-center').boundingBox())!
    const ids = await page
      .locator('.vis-item.board-bar:not(.board-bar--fixed):not(.board-bar--outside)')
      .evaluateAll((els) => els.map((e) => Number((e as HTMLElement).dataset.id)))
    for (const id of ids) {
      const box = await barBox(page, id)
      if (!box || box.width < 6 || box.x < panel.x + 4) continue
      const found = await page.evaluate(async (id) => {
        const from = new Date(Date.now() - 7 * 86_400_000).toISOString().slice(0, 10)
        const to = new Date(Date.now() + 35 * 86_400_000).toISOString().slice(0, 10)
        const b = await (await fetch(`/api/board?from=${from}&to=${to}`, { credentials: 'same-origin' })).json()
        return (b.items as { id: number; start: string }[]).find((x) => x.id === id) ?? null
      }, id)
      if (found) return found
    }
    await page.locator('[data-test=board-next]').click()
  }
  throw new Error('no movable bar on screen in four weeks')
}

const selectedRows = (page: Page) => page.locator('[data-test=board-rows] .el-segmented__item.is-selected').textContent()

describe('picking a bar on the board', () => {
  it('when a toolbar switch had the focus and a bar is clicked, then → moves the bar 15 minutes and the rows stay by bench', async () => {
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    await publishOnce(manager)
    await manager.goto('/plan')
    await rendered(manager)
    const bar = await movableBar(manager)

    // The rows switch is used first, so it holds the keyboard focus.
    await manager.locator('[data-test=board-rows]').getByText('Benches', { exact: true }).click()
    expect(await manager.evaluate(() => !!document.activeElement?.closest('[data-test=board-rows]'))).toBe(true)
    await expect(selectedRows(manager)).resolves.toBe('Benches')

    await manager.locator(`.vis-item.board-bar[data-id="${bar.id}"]`).click()
    await manager.locator('[data-test=bar-details]').waitFor()
    const asked = manager.waitForRequest((r) => r.method() === 'PATCH' && r.url().endsWith(`/api/board/operations/${bar.id}`), { timeout: 10_000 })
    await manager.keyboard.press('ArrowRight')
    // The move asked for: the bar's start plus 15 minutes, worked out here.
    const request = await asked
    expect(request.postDataJSON().start).toBe(new Date(Date.parse(bar.start) + 15 * 60_000).toISOString())
    await expect(selectedRows(manager)).resolves.toBe('Benches')
    await screenshot(manager, 'board-selection-01-key-on-bar')
    await ctx.close()
  })

  it('when a bar is tapped on a 1024 × 768 tablet, then its details come on screen', async () => {
    const ctx = await e2e.browser.newContext({
      baseURL: e2e.url,
      viewport: { width: 1024, height: 768 },
      locale: 'en-GB',
      timezoneId: 'Europe/London',
      hasTouch: true,
    })
    const tablet = await ctx.newPage()
    await signInWith(tablet, DEMO_EMAIL.manager, DEMO_PASSWORD)
    await tablet.waitForURL((u) => u.pathname === '/plan', { timeout: 30_000 })
    await publishOnce(tablet)
    await tablet.goto('/plan')
    await rendered(tablet)
    const bar = await movableBar(tablet)
    await tablet.locator(`.vis-item.board-bar[data-id="${bar.id}"]`).tap()
    const details = tablet.locator('[data-test=bar-details]')
    await details.waitFor()
    // Wholly inside the 768 px of the screen once it has scrolled there (to the pixel: the layout has fractions).
    await expect
      .poll(
        async () => {
          const box = await details.boundingBox()
          return !!box && box.y >= -1 && box.y + box.height <= 769
        },
        { timeout: 5_000, interval: 100 },
      )
      .toBe(true)
    await screenshot(tablet, 'board-selection-02-tablet-details', { fullPage: false })
    // A tap is not a hover: no hover card stays on screen over the details.
    await tablet.waitForTimeout(400)
    await expect(tablet.locator('[data-test=bar-tooltip]').count()).resolves.toBe(0)

    // A key move refused on the tablet: its reason comes on screen below the header, wherever the page was scrolled.
    const outside = tablet.locator('.vis-item.board-bar.board-bar--outside').first()
    await outside.scrollIntoViewIfNeeded()
    const outsideId = Number(await outside.getAttribute('data-id'))
    // Brought into view, the bar stays level with its row's name (the names' panel scrolls with the bars).
    const outsideRow = tablet.locator('.vis-label', { hasText: 'Outside work' })
    await expect
      .poll(
        async () => {
          const [bar, row] = [await outside.boundingBox(), await outsideRow.boundingBox()]
          return !!bar && !!row && bar.y >= row.y - 1 && bar.y + bar.height <= row.y + row.height + 1
        },
        { timeout: 5_000, interval: 100 },
      )
      .toBe(true)
    await outside.tap()
    await expect.poll(async () => Number(await tablet.locator('[data-test=bar-details]').getAttribute('data-operation')), { timeout: 5_000 }).toBe(outsideId)
    await tablet.keyboard.press('ArrowUp')
    const refusal = tablet.locator('[data-test=board-refusal]')
    await expect(refusal.textContent()).resolves.toMatch(/is outside work; it has no bench or person row/)
    const header = (await tablet.locator('header.shell__top').boundingBox())!
    await expect
      .poll(
        async () => {
          const box = await refusal.boundingBox()
          return !!box && box.y >= header.y + header.height - 1 && box.y + box.height <= 769
        },
        { timeout: 5_000, interval: 100 },
      )
      .toBe(true)
    await screenshot(tablet, 'board-selection-03-tablet-refusal', { fullPage: false })
    await ctx.close()
  })
})
