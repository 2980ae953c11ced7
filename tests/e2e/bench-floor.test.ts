// The bench tablet in Chromium at 10-inch sizes: the setter picks a bench, takes, starts, pauses, resumes and finishes a setting job while the manager's job bag page follows live.
import { asc, eq } from 'drizzle-orm'
import { describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import * as s from '../../server/db/schema/index'
import { DEMO_PASSWORD, makeStepReady, screenshot, signInWith, useE2E } from '../setup/e2e'
import { benchIdByName, openOrderStep, setPieceParams } from '../setup/fixtures'
import { recomputeStoneSteps } from '../../server/services/stones'

const e2e = useE2E()
const TABLET_LANDSCAPE = { width: 1280, height: 800 }
const TABLET_PORTRAIT = { width: 800, height: 1280 }

const makeReady = (operationId: number) => makeStepReady(e2e, operationId)

async function firstPending(kind: string, key?: string) {
  return (await openOrderStep(e2e.db.db, { kind, key, status: 'pending' }))!
}

async function tablet(email: string, viewport = TABLET_LANDSCAPE): Promise<{ context: BrowserContext; page: Page }> {
  const context = await e2e.browser.newContext({ baseURL: e2e.url, viewport, locale: 'en-GB', timezoneId: 'Europe/London', hasTouch: true })
  const page = await context.newPage()
  await signInWith(page, email, DEMO_PASSWORD)
  await page
    .waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
    .catch(async (err) => {
      await screenshot(page, `bench-sign-in-failed-${email.split('@')[0]}`)
      throw err
    })
  return { context, page }
}

const card = (page: Page, section: 'next-for-me' | 'my-work', opId: number) => page.locator(`[data-test=${section}] [data-op="${opId}"]`)

describe('the bench tablet', () => {
  it('when the setter works a setting job through, then each tap moves it and the manager’s job bag page follows live', async () => {
    const op = await firstPending('setting', 'set')
    await makeReady(op.id)
    // This bag has its own stone list (the demo's pavé pendant: 18 pavé stones of 1.5 mm a piece); its piece figures now say
    // otherwise (12 of 1.3 mm) and 2 pieces. The setting estimate is kept in step as an edit in the app keeps it.
    const [bag] = await e2e.db.db
      .select({ routing: s.routings.code })
      .from(s.jobBags)
      .innerJoin(s.routings, eq(s.routings.id, s.jobBags.routingId))
      .where(eq(s.jobBags.id, op.jobBagId))
    expect(bag!.routing).toBe('pave-pendant')
    const lines = await e2e.db.db
      .select({ role: s.jobBagStones.role, count: s.jobBagStones.count, sizeMm: s.jobBagStones.sizeMm })
      .from(s.jobBagStones)
      .where(eq(s.jobBagStones.jobBagId, op.jobBagId))
    expect(lines).toEqual([{ role: 'pave', count: 18, sizeMm: 1.5 }])
    await setPieceParams(e2e.db.db, op.jobBagId, { stoneCount: 12, stoneSizeMm: 1.3, sizeMm: 22, quantity: 2 })
    const [mgr] = await e2e.db.db
      .select({ userId: s.users.id, workshopId: s.users.workshopId, name: s.users.name })
      .from(s.users)
      .where(eq(s.users.email, 'manager@wrenfield.test'))
    await e2e.db.db.transaction((tx) =>
      recomputeStoneSteps(tx, { ...mgr!, role: 'manager', personId: null }, op.jobBagId, 'Piece figures: 12 of 1.3 mm a piece, 2 pieces'),
    )
    const benchId = await benchIdByName(e2e.db.db, 'Setting bench A')

    const manager = await tablet('manager@wrenfield.test')
    await manager.page.goto(`/job-bags/${op.jobBagId}`)
    const managerStatus = manager.page.locator(`[data-test="status-${op.id}"]`)
    await expect(managerStatus.textContent()).resolves.toMatch(/Ready/)

    const { context, page } = await tablet('setter@wrenfield.test')
    await page.goto('/bench')
    await page.locator('[data-test=bench-picker]').waitFor()
    await screenshot(page, 'bench-01-pick-bench-landscape')
    await page.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await expect(page.locator('[data-test=bench-name]').textContent()).resolves.toBe('Setting bench A')

    const next = card(page, 'next-for-me', op.id)
    await next.waitFor()
    const claimButton = next.locator('[data-test=claim]')
    const box = await claimButton.boundingBox()
    // Touch targets at least 48 px (WCAG 2.5.5 target size, 44 px minimum; Material guidance 48 dp).
    expect(box!.height).toBeGreaterThanOrEqual(48)
    await screenshot(page, 'bench-02-next-for-me-landscape')
    await claimButton.click()
    const mine = card(page, 'my-work', op.id)
    await mine.waitFor()
    await expect(mine.getAttribute('data-status')).resolves.toBe('claimed')
    await manager.page.waitForFunction((id) => document.querySelector(`[data-test="status-${id}"]`)?.textContent?.includes('Taken'), op.id, { timeout: 10_000 })

    await mine.locator('[data-test=start]').click()
    // Setting carries no hazard; a hazardous step would open the caution dialog here (covered below).
    await page.locator(`[data-test=my-work] [data-op="${op.id}"][data-status=running]`).waitFor()
    await manager.page.waitForFunction((id) => document.querySelector(`[data-test="status-${id}"]`)?.textContent?.includes('Working'), op.id, {
      timeout: 10_000,
    })
    // What to set, on the running card: the bag has its own stone list, so it is counted, hand-worked:
    // 18 a piece (the list) × 2 pieces = 36 of 1.5 mm (band 1.5–3 mm), not the figures' 12 × 2 = 24 of 1.3 mm.
    const running = page.locator(`[data-test=my-work] [data-op="${op.id}"]`)
    const facts = running.locator('[data-test=work-facts]')
    await expect(facts.locator('[data-test=stone-count]').innerText()).resolves.toMatch(/Stones\s+36\s+18 a piece × 2 pieces/i)
    await expect(facts.locator('[data-test=stone-size]').innerText()).resolves.toMatch(/Stone size\s+1\.5 mm\s+size band 1\.5–3 mm/i)
    // The figures that say otherwise are named, with what the planned time follows.
    await expect(running.locator('[data-test=stone-source]').innerText()).resolves.toBe(
      "Counted from the stone list. The order's figures say 12 × 1.3 mm a piece; the planned time follows the stone list.",
    )
    // The stone list beside it gives the same count: one line of 18 a piece × 2 pieces = 36 of 1.5 mm.
    const listLine = running.locator('[data-test=stone-count-back] .scb__what')
    await listLine.waitFor()
    await expect(listLine.allInnerTexts()).resolves.toEqual([expect.stringMatching(/^Pavé · 36 × 1\.5 mm round diamond/)])
    // Planned minutes, hand-worked from the seeded pavé pendant routing (set: base 30 + 7 min a stone, no band factor for
    // 1.5–3 mm, no learning curve, pavé role factor 1 — shared/domain/stones.ts, common practice, no source):
    // (30 + 7 × 18) × 2 = 156 × 2 = 312 min; counting the figures instead would give (30 + 7 × 12 × 1.2) × 2 = 261.6.
    const planned = (await e2e.db.db.select({ m: s.operations.estimateMinutes }).from(s.operations).where(eq(s.operations.id, op.id)))[0]!.m
    expect(planned).toBe(312)
    await expect(facts.locator('[data-test=planned-minutes]').innerText()).resolves.toMatch(/Planned\s+312 min/i)
    await screenshot(page, 'bench-03-running-landscape')

    await mine.locator('[data-test=pause]').click()
    await page.locator('[data-test=reason-end-of-day]').waitFor()
    await page.locator('[data-test=reason-end-of-day]').click()
    await screenshot(page, 'bench-04-pause-dialog-landscape')
    await page.locator('[data-test=confirm-pause]').click()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"][data-status=paused]`).waitFor()
    // Paused for the night, the metal can still be weighed back before the bag goes to the safe.
    await page.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=metal-weigh] [data-test=weigh-mode-back]`).waitFor()
    await manager.page.waitForFunction((id) => document.querySelector(`[data-test="status-${id}"]`)?.textContent?.includes('Paused'), op.id, {
      timeout: 10_000,
    })

    await page.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=resume]`).click()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"][data-status=running]`).waitFor()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=finish]`).click()
    // None of the list's 18 × 2 = 36 stones was taken from the safe in this run: the dialog says so before the step is finished.
    await expect
      .poll(() => page.locator('[data-test=finish-stones]').innerText(), { timeout: 10_000 })
      .toBe('Stones: 36 of the 36 stones on the list were never given out. Count them on the card first, or say in the note what happened.')
    await page.locator('[data-test=finish-note]').fill('All stones tight, checked under the scope')
    await page.locator('[data-test=confirm-finish]').click()
    await card(page, 'my-work', op.id).waitFor({ state: 'detached' })
    await manager.page.waitForFunction((id) => document.querySelector(`[data-test="status-${id}"]`)?.textContent?.includes('Done'), op.id, { timeout: 10_000 })
    await manager.page.waitForFunction(() => document.querySelector('[data-test=history]')?.textContent?.includes('finished'), null, { timeout: 10_000 })
    // The bag's next step (polishing) names the same count; its planned time does not count stones, so the note says no more.
    const nextStep = manager.page.locator('[data-test=next-step]')
    await nextStep.locator('[data-test=stones-short]').waitFor()
    await expect(nextStep.locator('[data-test=stones-short]').innerText()).resolves.toBe('36 stones of 1.5 mm (18 a piece × 2 pieces)')
    await expect(nextStep.locator('[data-test=stone-source]').innerText()).resolves.toBe(
      "Counted from the stone list. The order's figures say 12 × 1.3 mm a piece.",
    )
    await screenshot(manager.page, 'bench-05-manager-job-bag-live')

    const tr = s.timeRecords
    const records = await e2e.db.db.select({ endReason: tr.endReason, note: tr.note }).from(tr).where(eq(tr.operationId, op.id)).orderBy(asc(tr.id))
    expect(records).toEqual([
      { endReason: 'end-of-day', note: '' },
      { endReason: 'finished', note: 'All stones tight, checked under the scope' },
    ])

    // Portrait: the same screen stacks its two lists.
    await page.setViewportSize(TABLET_PORTRAIT)
    await page.reload()
    await page.locator('[data-test=next-for-me]').waitFor()
    await screenshot(page, 'bench-06-portrait')
    const [a, b] = [await page.locator('[data-test=my-work]').boundingBox(), await page.locator('[data-test=next-for-me]').boundingBox()]
    expect(b!.y).toBeGreaterThan(a!.y)
    await context.close()
    await manager.context.close()
  })

  it('when a polisher starts a lathe step, then the cautions are shown and must be acknowledged first; a scanned ticket opens the bag with its next step', async () => {
    const op = await firstPending('polishing')
    await makeReady(op.id)
    const benchId = await benchIdByName(e2e.db.db, 'Polishing station')
    const { context, page } = await tablet('ruth@wrenfield.test')
    await page.goto('/bench')
    await page.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await card(page, 'next-for-me', op.id).locator('[data-test=claim]').click()
    const mine = card(page, 'my-work', op.id)
    await mine.waitFor()
    await mine.locator('[data-test=start]').click()
    const dialog = page.locator('.el-dialog', { hasText: 'safety cautions' })
    await dialog.waitFor()
    await expect(dialog.textContent()).resolves.toMatch(/Polishing lathe: no gloves/)
    expect(await page.locator('[data-test=confirm-start]').isDisabled()).toBe(true)
    await screenshot(page, 'bench-07-caution-dialog')
    await page.locator('[data-test=acknowledge]').click()
    await page.locator('[data-test=confirm-start]').click()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"][data-status=running]`).waitFor()

    // What a scan leads to: the job bag page offering the bag's next step.
    await page.goto(`/job-bags/${op.jobBagId}?from=scan`)
    await page.locator('[data-test=next-step]').waitFor()
    await expect(page.locator('[data-test=next-step]').textContent()).resolves.toContain(op.name)
    await screenshot(page, 'bench-08-scanned-job-bag')
    await context.close()
  })
})
