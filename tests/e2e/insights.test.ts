// The owner's insights screen in Chromium: comparison tables with totals, charts drawn on canvas, drill-down to time records, suggestions, job costing.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import { screenshot, signInPage, startE2E, type E2E } from '../setup/e2e'

let e2e: E2E
let context: BrowserContext
let page: Page
beforeAll(async () => {
  e2e = await startE2E()
  context = await e2e.newContext()
  page = await signInPage(context, 'owner')
})
afterAll(async () => {
  await context?.close()
  await e2e?.close()
})

/** Pixels of a chart's canvas that are not blank (transparent or white): proof something was drawn. */
const inkedPixels = (p: Page, testId: string) => p.locator(`[data-test=${testId}] canvas`).first().evaluate((c: HTMLCanvasElement) => {
  const ctx = c.getContext('2d')!
  const { data } = ctx.getImageData(0, 0, c.width, c.height)
  let n = 0
  for (let i = 0; i < data.length; i += 4) if (data[i + 3]! > 0 && !(data[i]! > 245 && data[i + 1]! > 245 && data[i + 2]! > 245)) n++
  return n
})

describe('insights as the owner', () => {
  it('when the owner opens insights, then the table by kind has rows and a total, and both charts are drawn', async () => {
    await page.goto('/insights')
    await page.locator('[data-test=insights-comparison] .el-table__row').first().waitFor()
    expect(await page.locator('.mg-page-head h1').textContent()).toBe('Estimates and actual hours')
    // Seeded history (server/db/seed.ts): nine bench kinds with finished work.
    expect(await page.locator('[data-test=insights-comparison] .el-table__body .el-table__row').count()).toBeGreaterThanOrEqual(8)
    expect(await page.locator('[data-test=insights-comparison] .el-table__footer').textContent()).toContain('Total')
    await page.locator('[data-test=insights-scatter] canvas').first().waitFor()
    await page.locator('[data-test=insights-trend] canvas').first().waitFor()
    await page.waitForTimeout(300)
    expect(await inkedPixels(page, 'insights-scatter')).toBeGreaterThan(2000)
    expect(await inkedPixels(page, 'insights-trend')).toBeGreaterThan(2000)
    await page.locator('[data-test=insights-suggestions]').waitFor()
    await page.locator('[data-test=insights-costing] .el-table__row').first().waitFor()
    await screenshot(page, 'insights-overview')
  })

  it('when a row is clicked, then the drawer lists its operations and their time records', async () => {
    await page.locator('[data-test=insights-comparison] .el-table__body .el-table__row', { hasText: 'Stone setting' }).click()
    const drawer = page.locator('[data-test=insights-drill]')
    await drawer.getByText('Time behind: Stone setting').waitFor()
    await drawer.locator('.el-table__expand-icon').first().click()
    await drawer.locator('.el-table__expanded-cell .el-table__row').first().waitFor()
    await screenshot(page, 'insights-drill')
    const href = await drawer.locator('[data-test=insights-drill-csv]').getAttribute('href')
    expect(href).toMatch(/^\/api\/insights\/records\?groupBy=kind&key=\d+&format=csv$/)
    const r = await page.request.get(href!)
    expect(r.headers()['content-disposition']).toMatch(/^attachment; filename="time-records-kind-\d+\.csv"$/)
    await page.keyboard.press('Escape')
  })

  it('when the "By person" tab is chosen, then people are the rows and the CSV link follows the tab', async () => {
    await page.locator('.el-tabs__item', { hasText: 'By person' }).click()
    await page.locator('[data-test=insights-comparison] .el-table__row', { hasText: 'Ines Harrowby' }).waitFor()
    expect(await page.locator('[data-test=insights-csv]').getAttribute('href')).toBe('/api/insights/comparison?groupBy=person&format=csv')
    const r = await page.request.get('/api/insights/comparison?groupBy=person&format=csv')
    expect(r.status()).toBe(200)
    expect((await r.text()).split('\r\n')[0]).toBe('group,label,operations,estimate_hours,actual_hours,bias_hours,bias_pct,direction,mape_pct')
    await screenshot(page, 'insights-by-person')
  })

  it('when the manager tries the insights screen, then it is not for their role', async () => {
    const ctx = await e2e.newContext()
    const m = await signInPage(ctx, 'manager')
    await m.goto('/insights')
    await m.waitForURL((u) => u.pathname !== '/insights', { timeout: 10_000 })
    expect(new URL(m.url()).pathname).toBe('/not-allowed')
    await ctx.close()
  })
})
