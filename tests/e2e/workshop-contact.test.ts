// The owner keeps the workshop's address, contact and currency on the settings page; customers' e-mails carry them.
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
afterAll(async () => { await context?.close(); await e2e?.close() })

const field = (name: string) => page.locator(`input[data-test=${name}], [data-test=${name}] input`).first()

describe('workshop contact in the settings', () => {
  it('when the owner opens the settings, then the demo address shows; a changed telephone is saved; a bad currency is refused on its field', async () => {
    await page.goto('/settings')
    await field('settings-address').waitFor()
    // Invented demo data (server/db/seed.ts).
    // The form fills in once the settings have loaded: wait for the value, not for time.
    await expect.poll(() => field('settings-address').inputValue(), { timeout: 10_000 }).toBe('14 Wrenfield Street, Bristol BS1 4QX')
    expect(await field('settings-currency').inputValue()).toBe('GBP')
    await field('settings-currency').fill('XX')
    await page.locator('[data-test=settings-save]').click()
    await page.locator('[data-test=settings-workshop] .el-form-item__error', { hasText: /three-letter currency code/ }).waitFor()
    await field('settings-currency').fill('GBP')
    await field('settings-phone').fill('0117 496 0999')
    await page.locator('[data-test=settings-save]').click()
    await page.locator('.el-message', { hasText: 'Workshop details saved' }).waitFor()
    const { rows: [w] } = await e2e.db.pool.query(`select phone, currency, address from workshops where id = 1`)
    expect(w).toEqual({ phone: '0117 496 0999', currency: 'GBP', address: '14 Wrenfield Street, Bristol BS1 4QX' })
    await screenshot(page, 'settings-workshop-contact', { fullPage: false })
  })
})
