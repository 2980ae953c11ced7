// Stones and ring sizes in Chromium: the setter counts stones back on the tablet's running card and the job bag page shows the
// reconciliation; a ring size typed in one scale shows the others as it is typed.
import { asc, eq, exists } from 'drizzle-orm'
import { describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import { screenshot, signedInTablet, useE2E } from '../setup/e2e'
import { benchIdByName, finishSteps, openOrderStep, setStepStatus } from '../setup/fixtures'

const e2e = useE2E()

const page = (email: string, viewport?: { width: number; height: number }) => signedInTablet(e2e, email, viewport)

describe('stones on the bench and the job bag', () => {
  it('when the setter takes the pavé stones and counts them back on the tablet, then the job bag shows them all counted', async () => {
    // A demo pavé pendant whose setting step nobody has started, with its seeded stone list.
    const db = e2e.db.db
    const st = s.jobBagStones
    const op = (await openOrderStep(db, {
      routing: 'pave-pendant',
      key: 'set',
      status: 'pending',
      where: exists(db.select({ id: st.id }).from(st).where(eq(st.jobBagId, s.jobBags.id))),
      order: 'bag',
    }))!
    const line = (await db.select({ id: st.id, count: st.count }).from(st).where(eq(st.jobBagId, op.jobBagId)))[0]!
    await finishSteps(db, op.jobBagId, { exceptKeys: ['set', 'polish', 'inspect'] })
    await setStepStatus(db, op.id, 'ready')
    const benchId = await benchIdByName(db, 'Setting bench A')
    const total = line.count * op.params.quantity

    const setter = await page('setter@wrenfield.test')
    await setter.goto('/bench')
    await setter.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await setter.locator(`[data-test=next-for-me] [data-op="${op.id}"] [data-test=claim]`).click()
    await setter.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=start]`).click()
    const counter = setter.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=stone-count-back]`)
    await counter.waitFor()
    await counter.locator('[data-test=take-stones]').click()
    // Hand-worked: all the list's stones given out, none back yet: "Given out N · counted back 0 · N not counted back".
    await expect
      .poll(() => counter.locator('[data-test=line-state]').innerText(), { timeout: 10_000 })
      .toBe(`Given out ${total} · counted back 0 · ${total} not counted back`)
    // Large touch targets: at least 48 px (WCAG 2.5.5 target size 44 px; Material guidance 48 dp).
    expect((await counter.locator('[data-test=more-returned]').boundingBox())!.height).toBeGreaterThanOrEqual(48)
    // All start as set; one goes back unused instead: set total − 1, back 1.
    await counter.locator('[data-test=less-set]').click()
    await counter.locator('[data-test=more-returned]').click()
    await expect(counter.locator('[data-test=n-set]').innerText()).resolves.toBe(String(total - 1))
    await screenshot(setter, 'stones-01-tablet-count-back')
    await counter.locator('[data-test=count-back]').click()
    await expect
      .poll(() => counter.locator('[data-test=line-state]').innerText(), { timeout: 10_000 })
      .toBe(`Given out ${total} · counted back ${total} · all counted`)
    await screenshot(setter, 'stones-02-tablet-counted')

    const manager = await page('manager@wrenfield.test')
    await manager.goto(`/job-bags/${op.jobBagId}`)
    const row = manager.locator('[data-test=stone-list] .el-table__row').first()
    await expect.poll(() => row.locator('[data-test=counts]').innerText(), { timeout: 10_000 }).toBe(`${total} · ${total - 1} · 1 · 0 · 0`)
    await expect(row.locator('[data-test=state]').innerText()).resolves.toBe('counted')
    await expect(row.locator('[data-test=difference]').innerText()).resolves.toBe('all counted')
    await manager.locator('[data-test=stone-list]').scrollIntoViewIfNeeded()
    await screenshot(manager, 'stones-03-job-bag-reconciled')
    const sm = s.stoneMovements
    const rows = await db.select({ kind: sm.kind, count: sm.count }).from(sm).where(eq(sm.stoneLineId, line.id)).orderBy(asc(sm.id))
    expect(rows).toEqual([
      { kind: 'issued', count: total },
      { kind: 'set', count: total - 1 },
      { kind: 'returned', count: 1 },
    ])
  })

  it('when sales types US 7 in the order dialog, then ISO 54.4 (Ø 17.3 mm) and UK N½ are shown', async () => {
    const sales = await page('sales@wrenfield.test')
    await sales.goto('/orders')
    await sales.locator('[data-test=order-take]').click()
    // Choose the US scale and wait until the field shows it (on a busy machine a click can land while the list is still opening).
    const scale = sales.locator('[data-test=ring-size-0-scale]')
    await expect
      .poll(
        async () => {
          if (!(await scale.innerText()).includes('US / Canada')) {
            await scale.click()
            await sales
              .locator('.el-select-dropdown__item:visible', { hasText: 'US / Canada' })
              .click({ timeout: 3_000 })
              .catch(() => undefined)
          }
          return scale.innerText()
        },
        { timeout: 20_000 },
      )
      .toContain('US / Canada')
    await sales.locator('input[data-test=ring-size-0-value], [data-test=ring-size-0-value] input').first().fill('7')
    // US 7: (0.458 + 0.032 × 7) in = 17.32 mm inside, π × 17.32 = 54.4 mm round it (TRADE.md, "Ring size"); UK N½ beside US 7 on the pinned chart (just-color.com).
    await expect.poll(() => sales.locator('[data-test=ring-size-0-others]').innerText(), { timeout: 10_000 }).toBe('US 7 · ISO 54.4 (Ø 17.3 mm) · UK N½')
    await sales.locator('input[data-test=ring-size-0-value], [data-test=ring-size-0-value] input').first().fill('77')
    await expect.poll(() => sales.locator('[data-test=ring-size-0-others]').innerText()).toMatch(/Not a size in this scale/)
    await sales.locator('input[data-test=ring-size-0-value], [data-test=ring-size-0-value] input').first().fill('7')
    await screenshot(sales, 'stones-04-order-ring-size')
  })
})
