// The bench tablet's toasts in Chromium at 10-inch sizes: the note after a tap never covers the Scan ticket button at the top.
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { DEMO_PASSWORD, makeStepReady, screenshot, signInWith, useE2E } from '../setup/e2e'
import { benchIdByName, openOrderStep } from '../setup/fixtures'

const e2e = useE2E()

interface Box {
  x: number
  y: number
  width: number
  height: number
}

async function tablet(viewport: { width: number; height: number }): Promise<Page> {
  const context = await e2e.browser.newContext({ baseURL: e2e.url, viewport, locale: 'en-GB', timezoneId: 'Europe/London', hasTouch: true })
  const page = await context.newPage()
  await signInWith(page, 'setter@wrenfield.test', DEMO_PASSWORD)
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), { timeout: 30_000 })
  return page
}

/**
 * Waits for a new toast with `text` (one not marked by an earlier call) and for every toast shown to have settled (past Vue's
 * enter classes, no transition running); in that same moment reads where every toast and the Scan ticket button are and which
 * element a tap at the button's centre would reach, and marks the toasts as seen.
 */
async function toastsAndScan(page: Page, text: string) {
  const handle = await page.waitForFunction(
    (text) => {
      const toasts = [...document.querySelectorAll<HTMLElement>('.el-message')]
      const fresh = toasts.find((e) => e.textContent?.includes(text) && !e.dataset.seen)
      const scan = document.querySelector<HTMLElement>('[data-test=scan]')
      if (!fresh || !scan || toasts.some((e) => /-enter-/.test(e.className) || e.getAnimations().length)) return null
      for (const e of toasts) e.dataset.seen = '1'
      const box = (r: DOMRect) => ({ x: r.x, y: r.y, width: r.width, height: r.height })
      const s = scan.getBoundingClientRect()
      const hit = document.elementFromPoint(s.x + s.width / 2, s.y + s.height / 2)
      return {
        toasts: toasts.map((e) => ({ text: e.textContent?.trim() ?? '', ...box(e.getBoundingClientRect()) })),
        scan: box(s),
        tapReachesScan: !!hit && scan.contains(hit),
        viewportHeight: innerHeight,
      }
    },
    text,
    { timeout: 15_000, polling: 'raf' },
  )
  return (await handle.jsonValue()) as { toasts: (Box & { text: string })[]; scan: Box; tapReachesScan: boolean; viewportHeight: number }
}

/** Every toast shown is in the window, clear of the Scan ticket button and below it (a stack of toasts grows away from it), and a tap on the button reaches it. */
function expectScanClear(seen: Awaited<ReturnType<typeof toastsAndScan>>) {
  expect(seen.toasts.length).toBeGreaterThan(0)
  for (const t of seen.toasts) {
    expect(overlaps(t, seen.scan), `toast "${t.text}" over the Scan ticket button`).toBe(false)
    expect(t.y, `toast "${t.text}" below the Scan ticket button`).toBeGreaterThan(seen.scan.y + seen.scan.height)
    expect(t.y + t.height, `toast "${t.text}" inside the window`).toBeLessThanOrEqual(seen.viewportHeight)
  }
  expect(seen.tapReachesScan).toBe(true)
}

const overlaps = (a: Box, b: Box) => a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height

describe('the bench tablet’s toasts', () => {
  it('when the setter takes two jobs and starts one on a tablet, landscape then portrait, then every toast shows clear of the Scan ticket button and the button still opens the scanner', async () => {
    const op = (await openOrderStep(e2e.db.db, { kind: 'setting', key: 'set', status: 'pending' }))!
    await makeStepReady(e2e, op.id)
    const benchId = await benchIdByName(e2e.db.db, 'Setting bench A')

    // Landscape 1024 × 768: take the job, then at once the next one: two "Taken" toasts may show together.
    const landscape = await tablet({ width: 1024, height: 768 })
    await landscape.goto('/bench')
    await landscape.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await landscape.locator(`[data-test=next-for-me] [data-op="${op.id}"] [data-test=claim]`).click()
    await landscape.locator(`[data-test=my-work] [data-op="${op.id}"]`).waitFor()
    expectScanClear(await toastsAndScan(landscape, 'Taken'))
    const second = landscape.locator('[data-test=next-for-me] [data-op]').first()
    const secondId = Number(await second.getAttribute('data-op'))
    await second.locator('[data-test=claim]').click()
    await landscape.locator(`[data-test=my-work] [data-op="${secondId}"]`).waitFor()
    expectScanClear(await toastsAndScan(landscape, 'Taken'))
    await screenshot(landscape, 'bench-toast-landscape', { fullPage: false })
    // A tap on the button while a toast shows opens the scanner.
    await landscape.locator('[data-test=scan]').click()
    await landscape.getByRole('dialog', { name: 'Scan a job ticket' }).waitFor()
    await landscape.context().close()

    // Portrait 800 × 1280: start the first job; the "Started" toast shows.
    const portrait = await tablet({ width: 800, height: 1280 })
    await portrait.goto('/bench')
    await portrait.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await portrait.locator(`[data-test=my-work] [data-op="${op.id}"] [data-test=start]`).click()
    expectScanClear(await toastsAndScan(portrait, 'Started'))
    await screenshot(portrait, 'bench-toast-portrait', { fullPage: false })
    await portrait.locator('[data-test=scan]').click()
    await portrait.getByRole('dialog', { name: 'Scan a job ticket' }).waitFor()
    await portrait.context().close()
  })
})
