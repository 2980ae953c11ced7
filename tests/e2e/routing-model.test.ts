// The routing editor in Chromium: a routing's kind (new piece, repair, production run), its learning curve for production runs,
// per-mm minutes, stone size band factors and stone role factors are shown, saved and read back.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Locator, Page } from 'playwright-core'
import { and, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()
/** A routing's step as stored, with the routing's learning rate. */
const stepOf = (routing: string, key: string) =>
  e2e.db.db
    .select({ learningRate: s.routings.learningRate, perMmMinutes: s.routingSteps.perMmMinutes, roleFactors: s.routingSteps.roleFactors })
    .from(s.routings)
    .innerJoin(s.routingSteps, eq(s.routingSteps.routingId, s.routings.id))
    .where(and(eq(s.routings.name, routing), eq(s.routingSteps.key, key)))
let page: Page
beforeAll(async () => {
  page = await signInPage(await e2e.newContext(), 'owner')
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

    const [stored] = await stepOf(CUFF, 'polish')
    expect(stored!.learningRate).toBeCloseTo(0.9, 6)
    expect(stored!.perMmMinutes).toBeCloseTo(0.15, 6)

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
    const [stored] = await e2e.db.db.select({ learningRate: s.routings.learningRate }).from(s.routings).where(eq(s.routings.name, CUFF))
    expect(stored!.learningRate).toBeNull()
  })

  it('when the owner sets centre stones of the halo ring at ×4, then the step shows each role’s minutes a stone and saves only that factor', async () => {
    await openRouting('Halo engagement ring')
    const set = page.locator('[data-step=set]')
    const example = set.locator('[data-test=step-role-example]')
    // Seeded setting step (seed.ts): 8 min a stone. The usual role factors (common practice, no source): centre ×3, side ×1.5, halo ×1.2,
    // pavé ×1 → 24, 12, 9.6 and 8 min a stone before its size band.
    expect(await example.textContent()).toBe('One stone: centre 24 min · side 12 min · halo 9.6 min · pavé 8 min')
    expect(await numberBox(set, 'step-role-centre').getAttribute('placeholder')).toBe('×3')
    await numberBox(set, 'step-role-centre').fill('4')
    await numberBox(set, 'step-role-centre').press('Tab')
    // 8 × 4 = 32 min for a centre stone; the others keep the usual factors.
    await example.filter({ hasText: 'centre 32 min' }).waitFor()
    expect(await example.textContent()).toBe('One stone: centre 32 min · side 12 min · halo 9.6 min · pavé 8 min')
    await set.scrollIntoViewIfNeeded()
    await screenshot(page, 'routing-role-factors', { fullPage: false })
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    const [stored] = await stepOf('Halo engagement ring', 'set')
    expect(stored!.roleFactors).toEqual({ centre: 4 })
  })
})

describe('the kind of a routing', () => {
  const SIGNET = 'Signet ring'
  const kindLabel = (name: string) => row(page, name).locator('[data-test=routing-kind-label]')
  const kindOf = (name: string) => e2e.db.db.select({ kind: s.routings.kind, version: s.routings.version }).from(s.routings).where(eq(s.routings.name, name))

  it('when the list is read, then the demo’s repairs, its stud run and its new pieces each say their kind', async () => {
    await page.goto('/routings')
    await row(page, SIGNET).waitFor()
    // The demo (seed.ts): three repairs, one production run, the rest new pieces.
    expect(await kindLabel('Repair: chain link').textContent()).toBe('Repair')
    expect(await kindLabel('Repair: ring resize').textContent()).toBe('Repair')
    expect(await kindLabel('Production run: stud earrings').textContent()).toBe('Production run')
    expect(await kindLabel(SIGNET).textContent()).toBe('New piece')
    await screenshot(page, 'routing-kinds', { fullPage: false })
  })

  it('when the owner makes the signet ring a repair, then it is saved, the list says so and the editor reads it back', async () => {
    const [before] = await kindOf(SIGNET)
    await openRouting(SIGNET)
    expect(await page.locator('[data-test=routing-kind-piece] input').isChecked()).toBe(true)
    await page.locator('[data-test=routing-kind-repair]').click()
    await page.locator('[data-test=routing-kind-note]', { hasText: 'customer’s own piece' }).waitFor()
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await kindLabel(SIGNET)
      .filter({ hasText: /^Repair$/ })
      .waitFor()
    const [stored] = await kindOf(SIGNET)
    expect(stored).toEqual({ kind: 'repair', version: before!.version + 1 })

    // Read back in a fresh page: the editor shows what was stored.
    await page.reload()
    await openRouting(SIGNET)
    expect(await page.locator('[data-test=routing-kind-repair] input').isChecked()).toBe(true)
    expect(await page.locator('[data-test=routing-kind-piece] input').isChecked()).toBe(false)
    await page.locator('.el-drawer').getByRole('button', { name: 'Cancel' }).click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
  })
  it('when the ring resize opens, then it says it resizes a ring; a chain repair does not, and a new piece is not asked', async () => {
    // The demo (seed.ts): "Repair: ring resize" resizes a ring, "Repair: chain link" does not.
    await openRouting('Repair: ring resize')
    expect(await page.locator('[data-test=routing-resizes-ring] input').isChecked()).toBe(true)
    await screenshot(page, 'routing-resizes-ring', { fullPage: false })
    await page.keyboard.press('Escape')
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await openRouting('Repair: chain link')
    expect(await page.locator('[data-test=routing-resizes-ring] input').isChecked()).toBe(false)
    await page.keyboard.press('Escape')
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    await openRouting('Bezel-set solitaire ring')
    expect(await page.locator('[data-test=routing-resizes-ring]').count()).toBe(0)
    await page.keyboard.press('Escape')
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
  })

  it('when a production run is made a repair, then its learning curve is no longer offered and not saved', async () => {
    const STUDS = 'Production run: stud earrings'
    await openRouting(STUDS)
    await page.locator('[data-test=routing-run]').waitFor()
    await page.locator('[data-test=routing-kind-repair]').click()
    await page.locator('[data-test=routing-run]').waitFor({ state: 'detached' })
    await page.locator('[data-test=routing-save]').click()
    await page.locator('.el-drawer').waitFor({ state: 'hidden' })
    const [stored] = await e2e.db.db.select({ kind: s.routings.kind, learningRate: s.routings.learningRate }).from(s.routings).where(eq(s.routings.name, STUDS))
    expect(stored).toEqual({ kind: 'repair', learningRate: null })
  })
})

describe('closing the routing editor with changes not saved', () => {
  const drawer = () => page.locator('.el-drawer')
  const question = () => page.locator('.el-message-box', { hasText: 'Your changes to this routing are not saved' })

  it('when Esc is pressed after a change, then it asks; keeping on editing keeps the change, closing loses it and nothing is saved', async () => {
    const name = 'Etched cuff'
    await openRouting(name)
    // Unchanged: Esc closes at once.
    await page.keyboard.press('Escape')
    await drawer().waitFor({ state: 'hidden' })
    await openRouting(name)
    await numberBox(page, 'routing-name').fill('Etched cuff, wide')
    await page.keyboard.press('Escape')
    await question().waitFor()
    await screenshot(page, 'routing-unsaved-question', { fullPage: false })
    // Esc on the question answers it "keep editing": the editor stays, with the change.
    await page.keyboard.press('Escape')
    await question().waitFor({ state: 'hidden' })
    expect(await drawer().isVisible()).toBe(true)
    expect(await numberBox(page, 'routing-name').inputValue()).toBe('Etched cuff, wide')
    // A click beside the editor asks too; "Close and lose them" closes it.
    await page
      .locator('.el-overlay')
      .first()
      .click({ position: { x: 10, y: 300 } })
    await question().waitFor()
    await question().getByRole('button', { name: 'Close and lose them' }).click()
    await drawer().waitFor({ state: 'hidden' })
    const stored = await e2e.db.db.select({ name: s.routings.name }).from(s.routings).where(eq(s.routings.name, 'Etched cuff, wide'))
    expect(stored).toEqual([])
    // Opened again, it shows what is stored.
    await openRouting(name)
    expect(await numberBox(page, 'routing-name').inputValue()).toBe(name)
    await page.keyboard.press('Escape')
    await drawer().waitFor({ state: 'hidden' })
  })
})
