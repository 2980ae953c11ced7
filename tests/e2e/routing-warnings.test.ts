// The routing editor in Chromium: a step freed from the casting is warned about while editing, the list marks the saved routing, and putting the link back clears it.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { and, count, eq, notInArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()
let page: Page
beforeAll(async () => {
  page = await signInPage(await e2e.newContext(), 'manager')
})

const STUDS = 'Production run: stud earrings'
const row = (p: Page) => p.locator('.el-table__row', { hasText: STUDS })

describe('routing warnings in the editor', () => {
  it('when the demo stud run opens, then it has no warning and cleaning follows the casting', async () => {
    await page.goto('/routings')
    await row(page).waitFor()
    expect(await page.locator('[data-test=routing-warning-count]').count()).toBe(0)
    await row(page).click()
    const clean = page.locator('[data-step=clean]')
    await clean.waitFor()
    expect(await clean.textContent()).toContain('follows cast')
    expect(await page.locator('[data-test=routing-warnings]').count()).toBe(0)
  })

  it('when cleaning no longer comes after the casting, then the editor warns at once, saving still works and the list marks the routing', async () => {
    const clean = page.locator('[data-step=clean]')
    await clean.locator('.step__after .el-tag__close').click()
    const warnings = page.locator('[data-test=routing-warnings]')
    await warnings.waitFor()
    const text = await warnings.textContent()
    expect(text).toMatch(/“Cut off and clean” comes after no step, so it can be planned and started while “Cast tree \(caster\)” is still out/)
    expect(text).toMatch(/“Cast tree \(caster\)” is not connected to the other steps/)
    expect(await clean.locator('[data-test=step-warning]').textContent()).toMatch(/while outside work is still out/)
    expect(await page.locator('[data-step=cast] [data-test=step-warning]').textContent()).toMatch(/not connected/)
    await page.locator('.el-drawer__body').evaluate((el) => el.scrollTo(0, 0))
    await screenshot(page, 'routing-editor-warning', { fullPage: false })
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    // The count comes from the server's answer (GET /api/routings → warnings), not from the editor.
    await row(page).locator('[data-test=routing-warning-count]').waitFor()
    expect(await row(page).locator('[data-test=routing-warning-count]').textContent()).toMatch(/2 to check/)
    await screenshot(page, 'routings-list-warning', { fullPage: false })
  })

  it('when the link to the casting is put back, then the warnings go and the list no longer marks it', async () => {
    await row(page).click()
    const clean = page.locator('[data-step=clean]')
    await clean.waitFor()
    await page.locator('[data-test=routing-warnings]').waitFor()
    await clean.locator('.step__after .el-select__wrapper').click()
    await page.locator('.el-select-dropdown__item:visible', { hasText: /^cast$/ }).click()
    await page.keyboard.press('Escape')
    await page.locator('[data-test=routing-warnings]').waitFor({ state: 'detached' })
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await row(page).locator('[data-test=routing-warning-count]').waitFor({ state: 'detached' })
  })
})

describe('customers’ open orders', () => {
  it('when the customers open, then each open-order count equals the customer’s orders not collected or cancelled in the database', async () => {
    const rows = await e2e.db.db
      .select({ name: s.customers.name, n: count(s.orders.id) })
      .from(s.customers)
      .leftJoin(s.orders, and(eq(s.orders.customerId, s.customers.id), notInArray(s.orders.status, ['collected', 'cancelled'])))
      .groupBy(s.customers.name)
    const want = Object.fromEntries(rows.map((r) => [r.name, r.n]))
    expect(Object.values(want).some((n) => n > 0)).toBe(true)
    await page.goto('/customers')
    await page.locator('.el-table__row').first().waitFor()
    const shown = await page
      .locator('.el-table__body-wrapper .el-table__row')
      .evaluateAll((trs) => trs.map((tr) => Array.from(tr.querySelectorAll('td')).map((td) => td.textContent?.trim() ?? '')))
    const header = await page.locator('.el-table__header-wrapper th').evaluateAll((ths) => ths.map((th) => th.textContent?.trim() ?? ''))
    const col = header.indexOf('Open orders')
    expect(col).toBeGreaterThan(-1)
    const name = header.indexOf('Name')
    // All 16 demo customers fit on the first page.
    expect(Object.fromEntries(shown.map((cells) => [cells[name], Number(cells[col])]))).toEqual(want)
    await screenshot(page, 'customers-open-orders', { fullPage: false })
  })
})
