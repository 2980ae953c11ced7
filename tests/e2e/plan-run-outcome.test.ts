// The planning dialog in Chromium when a run finds no better plan than the live one: it says so in words, the board's button
// is free again and no message speaks of a draft — whether the end is heard live, missed and read back, or met by a Stop.
import { beforeAll, describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import * as s from '../../server/db/schema/index'
import { publishFirstPlans } from '../../server/planning/first-plan'
import { waitForRun } from '../../server/planning/runs'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()

beforeAll(async () => {
  // A planned demo workshop: its first plan, published as `npm start` does.
  expect(await publishFirstPlans(e2e.db.db, 2)).toHaveLength(1)
  // Every piece due (and promised) long after anything could finish: the live plan has no lateness, no plan can be less
  // late than none, so under "keep changes small" the planner finds nothing better.
  await e2e.db.db.update(s.orders).set({ dueDate: '2099-12-31', promisedDate: '2099-12-31' })
})

/** Every toast message shown on the page from now on (texts), however briefly. */
async function recordMessages(page: Page) {
  await page.evaluate(() => {
    const w = window as unknown as { __messages: string[] }
    w.__messages = []
    const seen = new WeakSet<Element>()
    const look = () =>
      document.querySelectorAll('.el-message').forEach((el) => {
        if (seen.has(el)) return
        seen.add(el)
        w.__messages.push(el.textContent ?? '')
      })
    new MutationObserver(look).observe(document.body, { childList: true, subtree: true })
  })
}
const messages = (page: Page) => page.evaluate(() => (window as unknown as { __messages: string[] }).__messages)

/**
 * Socket frames carrying `event` never reach the page (the page's socket stays connected), as when a broadcast is lost.
 * Returns a count of planner progress frames that did pass, which shows the live events travel this way.
 */
async function loseLiveEvent(context: BrowserContext, event: string) {
  const passed = { progress: 0 }
  await context.routeWebSocket(/\/socket\.io\//, (ws) => {
    const server = ws.connectToServer()
    server.onMessage((m) => {
      if (typeof m === 'string' && m.includes(`["${event}"`)) return
      if (typeof m === 'string' && m.includes('["plan:progress"')) passed.progress++
      ws.send(m)
    })
    ws.onMessage((m) => server.send(m))
  })
  return passed
}

async function openBoard(context: BrowserContext) {
  const page = await signInPage(context, 'manager')
  await page.goto('/plan')
  await page.locator('[data-test=board-timeline][data-rendered=true]').waitFor({ timeout: 20_000 })
  await expect(page.locator('[data-test=board-connection]').getAttribute('data-state')).resolves.toBe('connected')
  await recordMessages(page)
  return page
}

/** Starts a 2 s run from the dialog, keeping changes small; returns the run's id. */
async function startTwoSecondRun(page: Page) {
  await page.locator('[data-test=board-run]').click()
  await page.locator('[data-test=plan-budget-2]').click()
  await page.locator('[data-test=plan-stability-small]').click()
  const answer = page.waitForResponse((r) => r.url().endsWith('/api/plans/runs') && r.request().method() === 'POST')
  await page.locator('[data-test=plan-start]').click()
  const r = await answer
  expect(r.status()).toBe(202)
  return ((await r.json()) as { id: string }).id
}

/** The dialog says no better plan was found and the live plan stays; the board's button is idle; no draft was claimed. */
async function expectNoBetterShown(page: Page) {
  const dialog = page.locator('[data-test=plan-run-dialog]')
  // The run is over for the page: no Stop button any more (the dialog shows the outcome, or has closed).
  await page.waitForFunction(() => !document.querySelector('[data-test=plan-run-dialog] [data-test=plan-stop]'), null, { timeout: 20_000 })
  // Give a wrong message its chance to appear before saying none did.
  await page.waitForTimeout(500)
  expect((await messages(page)).filter((m) => /draft/i.test(m))).toEqual([])
  await expect(page.locator('[data-test=draft-banner]').count()).resolves.toBe(0)
  const outcome = dialog.locator('[data-test=plan-no-better]')
  await outcome.waitFor({ timeout: 5_000 })
  const text = (await outcome.textContent()) ?? ''
  expect(text).toMatch(/No better plan found/)
  expect(text).toMatch(/live plan stays as it is/)
  // Nothing is due before 2099: the best plan found and the live plan are both 0 h late × priority.
  expect(text).toMatch(/0 h late × priority/)
  const button = page.locator('[data-test=board-run]')
  await expect(button.textContent()).resolves.toMatch(/Run the planner/)
  await expect(button.getAttribute('class')).resolves.not.toMatch(/is-loading/)
}

describe('a planner run that finds no better plan', () => {
  it('when the run ends with no better plan, then the dialog says the live plan stays, with both figures, and the button is free again', async () => {
    const page = await openBoard(await e2e.newContext())
    const id = await startTwoSecondRun(page)
    await expectNoBetterShown(page)
    expect((await waitForRun(e2e.db.db, id))?.planId).toBeNull()
    await screenshot(page, 'plan-run-no-better', { fullPage: false })
  })

  it('when the page misses the live word of the end, then it still shows the outcome once the time limit has passed', async () => {
    const context = await e2e.newContext()
    const passed = await loseLiveEvent(context, 'plan:ended')
    const page = await openBoard(context)
    const id = await startTwoSecondRun(page)
    expect((await waitForRun(e2e.db.db, id))?.status).toBe('done')
    await expectNoBetterShown(page)
    expect(passed.progress).toBeGreaterThan(0)
  })

  it('when Stop is pressed on a run that has already ended with no better plan, then the dialog shows that outcome and no draft is claimed', async () => {
    const context = await e2e.newContext()
    await loseLiveEvent(context, 'plan:ended')
    // The page may not read the run back by itself until Stop is pressed, so the Stop button is still there to press.
    let readBack = false
    await context.route('**/api/plans/runs/*', (r) => (r.request().method() === 'GET' && !readBack ? r.abort() : r.continue()))
    const page = await openBoard(context)
    const id = await startTwoSecondRun(page)
    expect((await waitForRun(e2e.db.db, id))?.status).toBe('done')
    const stop = page.locator('[data-test=plan-run-dialog] [data-test=plan-stop]')
    await stop.waitFor()
    await stop.click()
    readBack = true
    await expectNoBetterShown(page)
  })
})
