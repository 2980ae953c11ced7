// The board in Chromium when the calendar changes under the live plan: a closure on a day with planned work puts a notice on
// the board (the live plan no longer fits, naming the closure) and marks the bars it took; removing it takes both away.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import { and, asc, gt, inArray, isNotNull } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { call, publishPlan, signInPage, useE2E } from '../setup/e2e'

dayjs.extend(utc)
dayjs.extend(timezone)

const TZ = 'Europe/London'
const e2e = useE2E()

const notice = (page: Page) => page.locator('[data-test=board-unfit]')

describe('the board after a calendar change', () => {
  it('when a closure is added on a day with planned work, then the board says the live plan no longer fits, and removing it clears that', async () => {
    const ctx = await e2e.newContext()
    const manager = await signInPage(ctx, 'manager')
    await manager.waitForURL((u) => u.pathname === '/plan')
    const plans = await call(manager, 'GET', '/api/plans')
    if (!(plans.body as { status: string }[]).some((p) => p.status === 'published')) await publishPlan(manager)
    // The first bench step still to come on the live plan, and its day in the workshop's zone.
    const [next] = await e2e.db.db
      .select({ id: s.operations.id, start: s.operations.plannedStart })
      .from(s.operations)
      .where(
        and(
          isNotNull(s.operations.plannedBenchId),
          inArray(s.operations.status, ['pending', 'ready']),
          gt(s.operations.plannedStart, new Date().toISOString()),
        ),
      )
      .orderBy(asc(s.operations.plannedStart))
      .limit(1)
    expect(next, 'the live plan has bench work still to come').toBeTruthy()
    const day = dayjs(next!.start!).tz(TZ).format('YYYY-MM-DD')
    await manager.reload()
    await manager.locator('[data-test=board-plan-line]').getByText('Live plan').waitFor()
    expect(await notice(manager).isVisible()).toBe(false)

    const added = await call(manager, 'POST', '/api/closures', { name: 'Boiler repair', startsOn: day, endsOn: day })
    expect(added.status, JSON.stringify(added.body)).toBe(201)
    // The board hears of it live and says so, naming the closure.
    await expect.poll(() => notice(manager).isVisible(), { timeout: 15_000 }).toBe(true)
    const text = await notice(manager).innerText()
    expect(text).toContain('The live plan no longer fits the calendar')
    expect(text).toContain('closed: Boiler repair')
    expect(await manager.locator('[data-test=board-unfit-run]').isVisible()).toBe(true)

    expect((await call(manager, 'DELETE', `/api/closures/${added.body.id}`)).status).toBe(200)
    await expect.poll(() => notice(manager).isVisible(), { timeout: 15_000 }).toBe(false)
    await ctx.close()
  })
})
