// Money typed on screen in Chromium: the order dialog reads a typed price digit by digit into whole pence and shows the server's
// estimated cost, margin and suggested price in the workshop's currency; a person's hourly cost is stored in whole pence.
import { eq } from 'drizzle-orm'
import { describe, expect, it } from 'vitest'
import type { Locator, Page } from 'playwright-core'
import * as s from '../../server/db/schema/index'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()
const input = (scope: Page | Locator, name: string) => scope.locator(`input[data-test=${name}], [data-test=${name}] input`).first()

describe('money typed on screen', () => {
  it('when sales types 1250.50 as the price of a signet ring, then 125,050 pence go to the server and its cost, margin and suggested price show in pounds', async () => {
    const page = await signInPage(await e2e.newContext(), 'sales')
    await page.goto('/orders')
    await page.locator('[data-test=order-take]').click()
    const dialog = page.locator('.el-dialog', { hasText: 'Take the order' })
    await dialog.locator('[data-test=order-routing-0]').click()
    await page.locator('.el-select-dropdown__item:visible', { hasText: 'Signet ring' }).first().click()
    // A price with more decimals than pounds have is refused at the field.
    await input(dialog, 'order-price').fill('12.345')
    await expect.poll(() => dialog.locator('[data-test=order-price-problem]').innerText()).toBe('Has at most 2 decimals in GBP')
    // A negative price: one plain reason.
    await input(dialog, 'order-price').fill('-50')
    await expect.poll(() => dialog.locator('[data-test=order-price-problem]').innerText()).toBe('Must be 0 or more')
    // 1250.50 read as digits: 1250 × 100 + 50 = 125,050 pence (1250.5 × 100 in floating point happens to be exact, 19.99 × 100 is not).
    const answered = page.waitForResponse(
      (r) => r.url().endsWith('/api/costing/estimate') && (r.request().postDataJSON() as { priceQuotedMinor: number }).priceQuotedMinor === 125_050,
      { timeout: 20_000 },
    )
    await input(dialog, 'order-price').fill('1250.50')
    const res = await answered
    const est = (await res.json()) as {
      currency: string
      priceMinor: number
      suggestedPriceMinor: number
      estimate: { cost: { totalMinor: number }; marginMinor: number; marginPct: number }
    }
    expect(est).toMatchObject({ currency: 'GBP', priceMinor: 125_050 })
    // The server's minor units written as the browser's locale writes pounds (ECMA-402; GBP has 2 decimals, ISO 4217).
    const locale = await page.evaluate(() => navigator.language)
    const gbp = (minor: number) => new Intl.NumberFormat(locale, { style: 'currency', currency: 'GBP' }).format(minor / 100)
    const box = dialog.locator('[data-test=order-estimated-cost]')
    await expect.poll(() => box.innerText(), { timeout: 15_000 }).toContain(`the price quoted leaves ${gbp(est.estimate.marginMinor)}`)
    const text = await box.innerText()
    expect(text).toContain(`Estimated cost ${gbp(est.estimate.cost.totalMinor)}`)
    expect(await dialog.locator('[data-test=order-suggested-price]').innerText()).toBe(gbp(est.suggestedPriceMinor))
    // The suggested price is a whole pound at the 40 % margin: ⌈cost ÷ 0.6⌉ up to the next 100 pence, worked here from the cost.
    expect(est.suggestedPriceMinor).toBe(Math.ceil(Math.ceil((est.estimate.cost.totalMinor * 100) / 60) / 100) * 100)
    await input(dialog, 'order-price').blur()
    expect(await input(dialog, 'order-price').inputValue()).toBe('1250.50')
    await screenshot(page, 'costing-order-dialog', { fullPage: false })
  })

  it('when the manager adds a person at 27.50 an hour, then 2,750 pence are stored and shown again as 27.50', async () => {
    const page = await signInPage(await e2e.newContext(), 'manager')
    await page.goto('/people')
    await page.locator('[data-test=person-add]').click()
    const dialog = page.locator('.el-dialog', { hasText: 'New person' })
    await input(dialog, 'person-name').fill('Ada Penhallow')
    await input(dialog, 'person-rate').fill('27.50')
    await screenshot(page, 'costing-person-rate', { fullPage: false })
    await dialog.locator('[data-test=person-save]').click()
    await expect
      .poll(async () => (await e2e.db.db.select({ rate: s.people.hourlyRateMinor }).from(s.people).where(eq(s.people.name, 'Ada Penhallow')))[0]?.rate, {
        timeout: 15_000,
      })
      .toBe(2750)
  })
})
