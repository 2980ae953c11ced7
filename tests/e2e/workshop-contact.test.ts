// The owner keeps the workshop's address, contact, currency and the address tablets open on the settings page; customers' e-mails and job tickets carry them.
import { networkInterfaces } from 'node:os'
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
    const [w] = await e2e.db.db
      .select({ phone: s.workshops.phone, currency: s.workshops.currency, address: s.workshops.address })
      .from(s.workshops)
      .where(eq(s.workshops.id, 1))
    expect(w).toEqual({ phone: '0117 496 0999', currency: 'GBP', address: '14 Wrenfield Street, Bristol BS1 4QX' })
    await screenshot(page, 'settings-workshop-contact', { fullPage: false })
  })

  it('when the owner saves the address tablets open, then the page offers this machine’s address first, refuses one with a path on its field, and reads the saved one back after a reload', async () => {
    await page.goto('/settings')
    await field('settings-public-url').waitFor()
    // The suggestion: this machine's first network IPv4 address (os.networkInterfaces, read here) and the port the test server listens on.
    const ip = Object.values(networkInterfaces())
      .flat()
      .find((a) => a && a.family === 'IPv4' && !a.internal)?.address
    const port = new URL(e2e.url).port
    const hint = page.locator('[data-test=settings-public-url-hint]')
    if (ip) await expect.poll(() => page.locator('[data-test=settings-public-url-suggestion]').textContent(), { timeout: 10_000 }).toBe(`http://${ip}:${port}`)
    else await hint.filter({ hasText: 'the address they were printed from' }).waitFor()
    // The test server listens on 127.0.0.1 only (HOST default), so the page says tablets cannot reach it yet.
    await hint.filter({ hasText: 'npm start -- --lan' }).waitFor()
    await expect.poll(() => field('settings-public-url').inputValue(), { timeout: 10_000 }).toBe('')
    await field('settings-public-url').fill('http://192.0.2.44:8080/millgrain')
    await page.locator('[data-test=settings-save]').click()
    await page.locator('[data-test=settings-workshop] .el-form-item__error', { hasText: /address with no path/ }).waitFor()
    // A TEST-NET address (RFC 5737): saved and read back, never contacted.
    await field('settings-public-url').fill('http://192.0.2.44:8080/')
    await page.locator('[data-test=settings-save]').click()
    await page.locator('.el-message', { hasText: 'Workshop details saved' }).waitFor()
    const [w] = await e2e.db.db.select({ publicUrl: s.workshops.publicUrl }).from(s.workshops).where(eq(s.workshops.id, 1))
    expect(w!.publicUrl).toBe('http://192.0.2.44:8080')
    await page.reload()
    await expect.poll(() => field('settings-public-url').inputValue(), { timeout: 10_000 }).toBe('http://192.0.2.44:8080')
    await screenshot(page, 'settings-workshop-public-url', { fullPage: false })
  })

  it('when the owner registers for VAT with a number short of a digit, then its reason shows and the rate beside it stays in line; with a Northern Ireland number the toast says the VAT details were saved', async () => {
    await page.goto('/settings')
    await expect.poll(() => field('settings-address').inputValue(), { timeout: 10_000 }).not.toBe('')
    await page.locator('[data-test=settings-vat-registered]').click()
    const number = field('settings-vat-number')
    const rate = field('settings-vat-rate')
    await number.fill('GB 123 4567 8')
    await page.locator('[data-test=settings-save]').click()
    const reason = page.locator('[data-test=settings-workshop] .el-form-item__error', { hasText: /UK VAT number/ })
    await reason.waitFor()
    await screenshot(page, 'settings-vat-number-refused', { fullPage: false })
    // The reason runs to two lines or more under the number: the field beside it and its label keep their place.
    const [numberBox, rateBox, reasonBox] = [await number.boundingBox(), await rate.boundingBox(), await reason.boundingBox()]
    expect(reasonBox!.height).toBeGreaterThan(20)
    expect(rateBox!.x).toBeGreaterThan(numberBox!.x + numberBox!.width)
    expect(Math.abs(rateBox!.y - numberBox!.y)).toBeLessThan(1)
    // XI and 9 digits: a business in Northern Ireland (as we remember HMRC's format).
    await number.fill('XI 123 4567 89')
    await page.locator('[data-test=settings-save]').click()
    await page.locator('.el-message', { hasText: 'VAT details saved' }).waitFor()
    expect(await page.locator('.el-message', { hasText: 'sign-in' }).count()).toBe(0)
    const [w] = await e2e.db.db
      .select({ vatRegistered: s.workshops.vatRegistered, vatNumber: s.workshops.vatNumber })
      .from(s.workshops)
      .where(eq(s.workshops.id, 1))
    expect(w).toEqual({ vatRegistered: true, vatNumber: 'XI 123 4567 89' })
  })
})
