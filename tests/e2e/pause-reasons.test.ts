// Pause reasons in Chromium: the owner adds one and switches one off in the workshop settings; the bench's pause dialog follows.
import { asc, eq } from 'drizzle-orm'
import { describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import { DEMO_PASSWORD, makeStepReady, screenshot, signInPage, signInWith, useE2E } from '../setup/e2e'
import { benchIdByName, openOrderStep } from '../setup/fixtures'

const e2e = useE2E()

/** A setting step made ready straight in the test database (its predecessors marked done yesterday). */
async function readySettingStep() {
  const op = (await openOrderStep(e2e.db.db, { kind: 'setting', key: 'set', status: 'pending' }))!
  await makeStepReady(e2e, op.id)
  return op
}

describe('pause reasons', () => {
  it('when the owner adds “Waiting for a casting” (with a note) and switches “Question for the manager” off, then the bench pause dialog offers exactly the reasons left on and the record keeps the new one', async () => {
    const ownerCtx = await e2e.newContext()
    const owner = await signInPage(ownerCtx, 'owner')
    await owner.goto('/settings')
    const panel = owner.locator('[data-test=settings-pause-reasons]')
    await panel.locator('[data-test=pause-reason-break]').waitFor()
    await panel.locator('[data-test=new-reason-label]').fill('Waiting for a casting')
    await panel.locator('[data-test=new-reason-needs-note]').click()
    await panel.locator('[data-test=new-reason-add]').click()
    await panel.locator('[data-test=pause-reason-waiting-for-a-casting]').waitFor()

    const question = panel.locator('[data-test=pause-reason-question-for-manager]')
    await question.locator('[data-test=reason-active]').click()
    await question.locator('[data-test=reason-save]').click()
    await owner.waitForFunction(() => document.querySelector('[data-test=pause-reason-question-for-manager] [data-test=reason-save]')?.hasAttribute('disabled'))
    // A name taken already is refused beside the field.
    await panel.locator('[data-test=new-reason-label]').fill('called away')
    await panel.locator('[data-test=new-reason-add]').click()
    await panel.locator('.el-form-item__error', { hasText: /already/ }).waitFor()
    await screenshot(owner, 'pause-reasons-01-settings')
    const [saved] = await e2e.db.db.select({ active: s.pauseReasons.active }).from(s.pauseReasons).where(eq(s.pauseReasons.code, 'question-for-manager'))
    expect(saved!.active).toBe(false)

    const op = await readySettingStep()
    const benchId = await benchIdByName(e2e.db.db, 'Setting bench A')
    const ctx = await e2e.browser.newContext({
      baseURL: e2e.url,
      viewport: { width: 1280, height: 800 },
      locale: 'en-GB',
      timezoneId: 'Europe/London',
      hasTouch: true,
    })
    const page = await ctx.newPage()
    await signInWith(page, 'setter@wrenfield.test', DEMO_PASSWORD)
    await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
    await page.goto('/bench')
    await page.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await page.locator(`[data-test=next-for-me] [data-op="${op.id}"] [data-test=claim]`).click()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=start]`).click()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"][data-status=running] [data-test=pause]`).click()
    const dialog = page.locator('[data-test=pause-dialog]')
    await dialog.locator('[data-test=reason-waiting-for-a-casting]').waitFor()
    const offered = await dialog.locator('[role=radio]').allInnerTexts()
    // The default list (shared/domain/pause-reasons.ts) less the one switched off, plus the one added (before "Other").
    expect(offered.map((s) => s.trim())).toEqual([
      'Break',
      'Waiting for stones',
      'Waiting for parts',
      'Waiting for the customer’s approval',
      'Tool or machine fault',
      'Called away',
      'End of day',
      'Waiting for a casting',
      'Other',
    ])
    await dialog.locator('[data-test=reason-waiting-for-a-casting]').click()
    await page.locator('[data-test=confirm-pause]').click()
    await dialog.locator('.el-form-item__error', { hasText: 'Waiting for a casting' }).waitFor()
    await page.locator('[data-test=pause-note]').fill('Caster sends it Thursday')
    await screenshot(page, 'pause-reasons-02-bench-dialog', { fullPage: false })
    await page.locator('[data-test=confirm-pause]').click()
    await page.locator(`[data-test=my-work] [data-op="${op.id}"][data-status=paused]`).waitFor()
    const tr = s.timeRecords
    const records = await e2e.db.db.select({ endReason: tr.endReason, note: tr.note }).from(tr).where(eq(tr.operationId, op.id)).orderBy(asc(tr.id))
    expect(records).toEqual([{ endReason: 'waiting-for-a-casting', note: 'Caster sends it Thursday' }])

    // The job bag's history names the reason, not its code.
    await page.goto(`/job-bags/${op.jobBagId}`)
    // Both the pause and the time record it closed: "… paused “Set pavé” (Waiting for a casting: …)" and "… worked N min (S s) on “Set pavé” — Waiting for a casting".
    await page.waitForFunction(
      () => /worked (\d+ min( \d+ s)?|\d+ s) on “.+” — Waiting for a casting/.test(document.querySelector('[data-test=history]')?.textContent ?? ''),
      null,
      { timeout: 10_000 },
    )
    const history = await page.locator('[data-test=history]').innerText()
    expect(history).not.toContain('waiting-for-a-casting')
    await screenshot(page, 'pause-reasons-03-history')
    await ctx.close()
    await ownerCtx.close()
  })
})
