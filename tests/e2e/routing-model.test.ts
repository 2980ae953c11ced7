// The routing editor in Chromium: a routing's learning curve for production runs, per-mm minutes and stone size band
// factors are shown, saved and read back.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { BrowserContext, Locator, Page } from 'playwright-core'
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

const CUFF = 'Etched cuff'
const row = (p: Page, name: string) => p.locator('.el-table__row', { hasText: name })
/** The text box of an Element Plus number input marked with data-test. */
const numberBox = (scope: Page | Locator, test: string) => scope.locator(`[data-test=${test}]`).locator('xpath=descendant-or-self::input').first()
const openRouting = async (name: string) => {
  await page.goto('/routings')
  await row(page, name).waitFor()
  await row(page, name).click()
  await page.locator('.el-drawer [data-step]').first().waitFor()
}

describe('the step model in the routing editor', () => {
  it('when the demo stud run opens, then it learns at 85 % and the pavé setting step shows its band factors', async () => {
    await openRouting('Production run: stud earrings')
    expect(await page.locator('[data-test=routing-learns] input').isChecked()).toBe(true)
    expect(await numberBox(page, 'routing-learning-rate').inputValue()).toBe('85.0')
    await page.locator('.el-drawer').getByRole('button', { name: 'Cancel' }).click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await openRouting('Pavé pendant in laminated metal')
    const set = page.locator('[data-step=set]')
    // Seeded setting bands (seed.ts): melee ×1.2, large ×1.5, small not given (counts ×1).
    expect(await numberBox(set, 'step-band-melee').inputValue()).toBe('1.20')
    expect(await numberBox(set, 'step-band-small').inputValue()).toBe('')
    expect(await numberBox(set, 'step-band-large').inputValue()).toBe('1.50')
    expect(await set.locator('.step__follows').textContent()).toContain('×1.2 under 1.5 mm, ×1.5 over 3 mm')
    await set.scrollIntoViewIfNeeded()
    await screenshot(page, 'routing-band-factors', { fullPage: false })
    await page.locator('.el-drawer').getByRole('button', { name: 'Cancel' }).click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
  })

  it('when the owner gives the cuff a 90 % learning curve and 0.15 min a mm of polishing, then both are saved and read back', async () => {
    await openRouting(CUFF)
    const polish = page.locator('[data-step=polish]')
    // Seeded (seed.ts): 14 min + 0.1 min a mm.
    expect(await numberBox(polish, 'step-per-mm').inputValue()).toBe('0.10')
    await numberBox(polish, 'step-per-mm').fill('0.15')
    await numberBox(polish, 'step-per-mm').press('Tab')
    await polish.locator('.step__follows', { hasText: '+ 0.15 min a mm of size' }).waitFor()
    await page.locator('[data-test=routing-learns]').click()
    const rate = numberBox(page, 'routing-learning-rate')
    await rate.waitFor()
    await rate.fill('90')
    await rate.press('Tab')
    // Wright's cumulative average at 90 %, worked outside the code: 4^log₂0.9 = 0.9² = 81 %, 8: 0.9³ = 72.9 %,
    // 40^log₂0.9 = e^(−0.152003 × 3.688879) = 57.08 % → 57.1 %.
    const note = page.locator('.routing__run-note')
    await note.filter({ hasText: 'At 90 %' }).waitFor()
    expect(await note.textContent()).toMatch(/first four 81 %, the first eight 72\.9 %: a run of 40 costs 57\.1 % of forty times one piece/)
    await page.locator('.el-drawer__body').evaluate((el) => el.scrollTo(0, 0))
    await screenshot(page, 'routing-learning-curve', { fullPage: false })
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await row(page, CUFF).locator('[data-test=routing-learning]', { hasText: 'each doubling at 90 % per piece' }).waitFor()

    const { rows } = await e2e.db.pool.query(
      `select t.learning_rate, s.per_mm_minutes from routing_templates t join template_steps s on s.template_id = t.id where t.name = $1 and s.key = 'polish'`, [CUFF])
    expect(rows[0].learning_rate).toBeCloseTo(0.9, 6)
    expect(rows[0].per_mm_minutes).toBeCloseTo(0.15, 6)

    // Read back in a fresh page: the editor shows what was stored.
    await page.reload()
    await openRouting(CUFF)
    expect(await page.locator('[data-test=routing-learns] input').isChecked()).toBe(true)
    expect(await numberBox(page, 'routing-learning-rate').inputValue()).toBe('90.0')
    expect(await numberBox(page.locator('[data-step=polish]'), 'step-per-mm').inputValue()).toBe('0.15')
  })

  it('when the learning curve is switched off again, then the routing is saved without one', async () => {
    await page.locator('[data-test=routing-learns]').click()
    await page.locator('[data-test=routing-learning-rate]').waitFor({ state: 'detached' })
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await row(page, CUFF).locator('[data-test=routing-learning]').waitFor({ state: 'detached' })
    const { rows } = await e2e.db.pool.query(`select learning_rate from routing_templates where name = $1`, [CUFF])
    expect(rows[0].learning_rate).toBeNull()
  })
})
