// The master-data screens in Chromium: each opens with the demo workshop's data, forms show reasons next to fields, saving works.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()
let page: Page
beforeAll(async () => {
  page = await signInPage(await e2e.newContext(), 'owner')
})

const heading = (p: Page) => p.locator('.mg-page-head h1').textContent()

describe('master-data screens as the owner', () => {
  it('when the benches open, then the demo benches are listed with what they host, and a bench opens for editing', async () => {
    await page.goto('/benches')
    expect(await heading(page)).toBe('Benches')
    await page.getByText('Setting bench A').waitFor()
    expect(await page.locator('.el-table__row').count()).toBe(8)
    await page.getByText('Polishing station').click()
    await page.locator('.el-dialog').getByText('Downtime', { exact: true }).waitFor()
    await screenshot(page, 'benches-edit', { fullPage: false })
    await page.locator('.el-dialog').getByRole('button', { name: 'Cancel' }).click()
  })

  it('when a bench is saved without a name, then the shared rule shows next to the name field before anything is sent', async () => {
    await page.goto('/benches')
    await page.locator('[data-test=bench-add]').click()
    await page.locator('[data-test=bench-save]').click()
    const item = page.locator('.el-dialog .el-form-item', { has: page.locator('[data-test=bench-name]') })
    await item.locator('.el-form-item__error').waitFor()
    expect(await item.locator('.el-form-item__error').textContent()).toMatch(/is required/i)
    await page.locator('.el-dialog').getByRole('button', { name: 'Cancel' }).click()
  })

  it('when a bench takes a name already used, then the server’s reason shows next to the name field', async () => {
    await page.goto('/benches')
    await page.locator('[data-test=bench-add]').click()
    await page.locator('.el-dialog input[data-test=bench-name]').fill('Polishing station')
    await page.locator('.el-dialog .el-form-item', { hasText: 'Kind of bench' }).locator('input').fill('polishing')
    await page.locator('[data-test=bench-save]').click()
    const item = page.locator('.el-dialog .el-form-item', { has: page.locator('[data-test=bench-name]') })
    await item.locator('.el-form-item__error').waitFor()
    expect(await item.locator('.el-form-item__error').textContent()).toMatch(/already used by another bench/i)
    await screenshot(page, 'benches-name-taken', { fullPage: false })
    await page.locator('.el-dialog').getByRole('button', { name: 'Cancel' }).click()
  })

  it('when people & skills open, then skills are listed and a person’s skills editor shows levels and speed', async () => {
    await page.goto('/people')
    expect(await heading(page)).toBe('People & skills')
    // Planned minutes = routing minutes ÷ speed (shared/domain/estimate.ts): a speed of 0.50 doubles the time, so the page must not say the speed multiplies the minutes.
    expect(await page.locator('[data-test=people-intro]').innerText()).toMatch(
      /Speed divides the routing’s minutes: above 1\.00 is quicker, below 1\.00 takes longer \(0\.50 takes twice as long\)/,
    )
    // Hand-worked from the demo's week: Ruth works Monday to Thursday, 08:30–17:00 less a 45-minute lunch = 7 h 45 min a day,
    // so 4 × 7 h 45 min = 31 h; Sam works mornings, 08:30–12:30 five days = 20 h. Written as the calendar writes hours.
    expect(await page.locator('.el-table__row', { hasText: 'Ruth Calder' }).innerText()).toContain('Own · 31 h a week')
    expect(await page.locator('.el-table__row', { hasText: 'Sam Ottery' }).innerText()).toContain('Own · 20 h a week')
    await page.getByText('Ines Harrowby').first().click()
    await page.locator('.el-dialog .el-tabs__item', { hasText: 'Skills' }).click()
    await page.locator('[data-test=skill-row]').first().waitFor()
    expect(await page.locator('[data-test=skill-row]').count()).toBe(3)
    await screenshot(page, 'people-skills', { fullPage: false })
    await page.locator('.el-dialog').getByRole('button', { name: 'Cancel' }).click()
  })

  it('when the calendar opens, then the working week shows the lunch break as a gap', async () => {
    await page.goto('/calendar')
    await page.locator('[data-weekday="1"]').getByText('break 12:30–13:15').waitFor()
    await screenshot(page, 'calendar')
  })

  it("when the manager adds the bank holidays of the year after next, then the eight days of England and Wales' standing rules are listed as closures", async () => {
    // Beyond the demo's own closures (which reach about six months ahead), so none is skipped; the rules give eight days a year
    // (New Year's Day, Good Friday, Easter Monday, two May Mondays, August's last Monday, Christmas Day, Boxing Day).
    // The year as the browser's London clock has it (the picker's years are counted from it), not this machine's zone's.
    const year = Number(new Intl.DateTimeFormat('en-GB', { timeZone: 'Europe/London', year: 'numeric' }).format(new Date())) + 2
    await page.goto('/calendar')
    const box = page.locator('[data-test=bank-holidays]')
    await box.locator('[data-test=bank-holidays-year]').click()
    await page.getByRole('option', { name: String(year), exact: true }).click()
    await box.locator('[data-test=bank-holidays-add]').click()
    await page.locator('.el-message', { hasText: `8 bank holidays of ${year} added` }).waitFor()
    await page.getByText('Bank holiday: Summer bank holiday').first().waitFor()
    await screenshot(page, 'calendar-bank-holidays')
  })

  it('when the routings are listed, then the bench minutes say they are for one piece without stones', async () => {
    await page.goto('/routings')
    const row = page.locator('.el-table__row', { hasText: 'Pavé pendant in laminated metal' })
    await row.waitFor()
    // The demo's pavé pendant, its bench steps' base minutes summed by hand: 90 + 25 + 40 + 30 + 40 + 10 + 30 + 35 + 10 = 310;
    // its setting adds 7 min a stone on top, so the figure holds only for a piece without stones.
    expect((await row.locator('td').allInnerTexts()).map((c) => c.trim())).toContain('310')
    expect(await page.locator('[data-test=bench-min-note]').innerText()).toBe('one piece, no stones')
    await screenshot(page, 'routings-list', { fullPage: false })
  })

  it('when a routing opens, then each step says what it follows and hazardous steps carry their cautions', async () => {
    await page.goto('/routings')
    await page.getByText('Pavé pendant in laminated metal').click()
    const solder = page.locator('[data-step=solder]')
    await solder.waitFor()
    expect(await solder.textContent()).toContain('follows pierce, bail')
    expect(await solder.locator('[data-test=hazard-note]').textContent()).toMatch(/flashback arrestors[\s\S]*Pickle[\s\S]*local codes/)
    await screenshot(page, 'routing-editor', { fullPage: false })
    await page.locator('.el-drawer').getByRole('button', { name: 'Cancel' }).click()
  })

  it('when a customer with a bad e-mail is saved, then the shared rule shows next to the field; fixed, the customer is added and found by search', async () => {
    await page.goto('/customers')
    await page.locator('[data-test=customer-add]').click()
    await page.locator('.el-dialog input[data-test=customer-name]').fill('Wilhelmina Sparrowgate')
    await page.locator('.el-dialog input[data-test=customer-email]').fill('not-an-address')
    await page.locator('[data-test=customer-save]').click()
    const item = page.locator('.el-dialog .el-form-item', { has: page.locator('[data-test=customer-email]') })
    await item.locator('.el-form-item__error').waitFor()
    expect(await item.locator('.el-form-item__error').textContent()).toMatch(/e-mail address/i)
    await page.locator('.el-dialog input[data-test=customer-email]').fill('wilhelmina@example.test')
    await page.locator('[data-test=customer-save]').click()
    await page.locator('.el-dialog').waitFor({ state: 'hidden' })
    await page.locator('input[data-test=customer-search]').fill('Sparrowgate')
    await page.waitForFunction(() => document.querySelectorAll('.el-table__row').length === 1)
    expect(await page.locator('.el-table__row').textContent()).toContain('wilhelmina@example.test')
    await screenshot(page, 'customers')
  })

  it('when sales lists the collected orders on a 1366 × 768 laptop, then every column, the status and the number of bags, is in view without scrolling sideways', async () => {
    const sales = await signInPage(await e2e.newContext({ viewport: { width: 1366, height: 768 } }), 'sales')
    await sales.goto('/orders')
    await sales.locator('.el-segmented').getByText('Collected', { exact: true }).click()
    const table = sales.locator('[data-test=orders-table]')
    const tag = table.locator('.el-table__row').first().locator('.el-tag')
    await tag.filter({ hasText: 'Collected' }).waitFor()
    const box = (await table.boundingBox())!
    for (const [what, el] of [
      ['the Bags heading', table.locator('th', { hasText: 'Bags' })],
      ['the status word', tag],
    ] as const) {
      const b = (await el.boundingBox())!
      expect(b.x + b.width, what).toBeLessThanOrEqual(box.x + box.width)
    }
    await screenshot(sales, 'orders-collected-laptop', { fullPage: false })
    await sales.context().close()
  })

  it('when an order is opened from the list, then its job bags and operations are shown', async () => {
    await page.goto('/orders')
    await page.locator('[data-test=orders-table] .el-table__row').first().click()
    await page.locator('.el-drawer [data-bag]').first().waitFor()
    expect(page.url()).toMatch(/\/orders\/\d+$/)
    await screenshot(page, 'order-detail', { fullPage: false })
  })

  it('when an order is taken with one piece, then it gets a number and opens with its job bag', async () => {
    await page.goto('/orders')
    await page.locator('[data-test=order-take]').click()
    const dialog = page.locator('.el-dialog', { hasText: 'Take an order' })
    await dialog.locator('[data-test=order-save]').click()
    await dialog.locator('.el-form-item__error').first().waitFor()
    expect(await dialog.locator('.el-form-item__error').allTextContents()).toEqual(expect.arrayContaining([expect.stringMatching(/is required|must be/i)]))
    await dialog.locator('[data-test=order-customer]').click()
    // The picker asks for its list as it opens: on a busy machine the first item shown can be replaced as the answer comes in.
    await page.waitForLoadState('networkidle')
    await page.locator('.el-select-dropdown__item:visible').first().click()
    await dialog.locator('input[data-test=order-title]').fill('Bezel ring for an anniversary')
    const due = dialog.locator('.el-form-item', { hasText: 'Due (the customer' }).locator('input')
    await due.fill('14 Mar 2030')
    await due.press('Enter')
    await dialog.locator('.el-dialog__title').click()
    await page.locator('.el-picker__popper:visible').waitFor({ state: 'detached' })
    const piece = dialog.locator('[data-test=order-piece]').first()
    await piece.locator('.el-select').first().click()
    await page.locator('.el-select-dropdown__item:visible', { hasText: 'Bezel-set solitaire ring' }).click()
    await piece.getByText(/Estimate from the routing/).waitFor()
    // The ring size box has room for a size as typed (e.g. "N½"): it was squeezed to nothing beside its scale.
    const sizeBox = await dialog.locator('input[data-test=ring-size-0-value]').boundingBox()
    expect(sizeBox!.width).toBeGreaterThanOrEqual(60)
    await screenshot(page, 'order-take', { fullPage: false })
    // Esc with the order typed in asks before anything is lost; Esc on the question keeps the dialog as it was.
    await dialog.locator('.el-dialog__title').click()
    await page.keyboard.press('Escape')
    const question = page.locator('.el-message-box', { hasText: 'Your changes to this order are not saved' })
    await question.waitFor()
    await page.keyboard.press('Escape')
    await question.waitFor({ state: 'hidden' })
    expect(await dialog.locator('input[data-test=order-title]').inputValue()).toBe('Bezel ring for an anniversary')
    await dialog.locator('[data-test=order-save]').click()
    await page.locator('.el-drawer [data-bag]').first().waitFor()
    expect(await page.locator('.el-drawer').textContent()).toContain('Bezel ring for an anniversary')
  })

  it('when team access opens, then every demo user is listed with a role', async () => {
    await page.goto('/team')
    await page.getByText('setter@wrenfield.test').waitFor()
    expect(await page.locator('.el-table__row').count()).toBe(8)
    await screenshot(page, 'team')
  })

  it('when workshop settings open, then the operation kinds with their hazards are listed', async () => {
    await page.goto('/settings')
    await page.getByText('Etching & oxidising').waitFor()
    await screenshot(page, 'settings')
  })

  it('when an operation kind is renamed in its dialog, then the new name is stored with the next version and listed', async () => {
    await page.goto('/settings')
    const before = (
      await e2e.db.db
        .select({ id: s.operationKinds.id, version: s.operationKinds.version })
        .from(s.operationKinds)
        .where(eq(s.operationKinds.name, 'Etching & oxidising'))
    )[0]!
    await page.getByText('Etching & oxidising').click()
    const dialog = page.locator('.el-dialog', { hasText: 'Operation kind: Etching & oxidising' })
    await dialog.locator('.el-form-item', { hasText: 'Name' }).first().locator('input').fill('Etching and oxidising')
    await dialog.getByRole('button', { name: 'Save' }).click()
    await page.locator('.el-table').getByText('Etching and oxidising').waitFor()
    const [after] = await e2e.db.db
      .select({ name: s.operationKinds.name, version: s.operationKinds.version })
      .from(s.operationKinds)
      .where(eq(s.operationKinds.id, before.id))
    expect(after).toEqual({ name: 'Etching and oxidising', version: before.version + 1 })
  })
})
