// The bench tablet's toasts in Chromium at 10-inch sizes: the note after a tap shows in the title bar, one at a time, and never
// covers the Scan ticket button at the top nor a running card's buttons (the weighing keypad, Weigh out, Pause, Finish) wherever
// the page is scrolled.
import { and, eq, inArray, isNull, sql } from 'drizzle-orm'
import { describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import * as s from '../../server/db/schema/index'
import { PIECE_METAL_ALLOY } from '../../shared/domain/metal'
import { DEMO_PASSWORD, call, makeStepReady, screenshot, signInWith, useE2E } from '../setup/e2e'
import { benchIdByName, openOrderStep, personIdByEmail } from '../setup/fixtures'

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
 * enter classes, no transition running); in that same moment reads where every toast shown, the title bar and the buttons that
 * must stay free are (the Scan ticket button and, with `card`, every button of that card of My work), which of those buttons a
 * tap at its centre would reach, and marks the toasts as seen.
 */
async function toastsAndButtons(page: Page, text: string, card?: number) {
  const handle = await page.waitForFunction(
    ({ text, card }) => {
      const toasts = [...document.querySelectorAll<HTMLElement>('.el-message')]
      const fresh = toasts.find((e) => e.textContent?.includes(text) && !e.dataset.seen)
      const scan = document.querySelector<HTMLElement>('[data-test=scan]')
      const bar = document.querySelector<HTMLElement>('.shell__top')
      if (!fresh || !scan || !bar || toasts.some((e) => /-enter-/.test(e.className) || e.getAnimations().length)) return null
      for (const e of toasts) e.dataset.seen = '1'
      const box = (r: DOMRect) => ({ x: r.x, y: r.y, width: r.width, height: r.height })
      const buttons = [scan, ...(card === null ? [] : document.querySelectorAll<HTMLElement>(`[data-test=my-work] [data-op="${card}"] button`))]
      return {
        // A toast hidden behind a newer one (visibility: hidden) is not shown.
        toasts: toasts
          .filter((e) => getComputedStyle(e).visibility === 'visible')
          .map((e) => ({ text: e.textContent?.trim() ?? '', ...box(e.getBoundingClientRect()) })),
        bar: box(bar.getBoundingClientRect()),
        buttons: buttons.map((b) => {
          const r = b.getBoundingClientRect()
          const hit = document.elementFromPoint(r.x + r.width / 2, r.y + r.height / 2)
          return { name: b.dataset.test ?? b.textContent?.trim() ?? '', ...box(r), tapReaches: !!hit && b.contains(hit) }
        }),
        viewportHeight: innerHeight,
      }
    },
    { text, card: card ?? null },
    { timeout: 15_000, polling: 'raf' },
  )
  return (await handle.jsonValue()) as {
    toasts: (Box & { text: string })[]
    bar: Box
    buttons: (Box & { name: string; tapReaches: boolean })[]
    viewportHeight: number
  }
}

/**
 * One toast shows, inside the title bar, clear of the part of every button that must stay free not already under the bar (the
 * sticky bar itself covers what has scrolled under it); a tap on a button wholly in the window below the bar (the Scan ticket button
 * always is here) reaches it; returns the buttons that were in that part of the window.
 */
function expectButtonsClear(seen: Awaited<ReturnType<typeof toastsAndButtons>>) {
  expect(seen.toasts, 'one toast shown at a time').toHaveLength(1)
  const [t] = seen.toasts
  const barEnd = seen.bar.y + seen.bar.height
  expect(t!.y, `toast "${t!.text}" inside the title bar`).toBeGreaterThanOrEqual(seen.bar.y)
  expect(t!.y + t!.height, `toast "${t!.text}" inside the title bar`).toBeLessThanOrEqual(barEnd)
  for (const b of seen.buttons) {
    const shown = { ...b, y: Math.max(b.y, barEnd), height: b.y + b.height - Math.max(b.y, barEnd) }
    if (shown.height > 0) expect(overlaps(t!, shown), `toast "${t!.text}" over the button ${b.name}`).toBe(false)
  }
  const inView = seen.buttons.filter((b) => b.y >= barEnd && b.y + b.height <= seen.viewportHeight)
  for (const b of inView) expect(b.tapReaches, `a tap on ${b.name} reaches it`).toBe(true)
  return inView.map((b) => b.name)
}

const overlaps = (a: Box, b: Box) => a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height

/** Scrolls the window so the element's top edge sits `top` px from the window's top, or its bottom edge `bottom` px above the window's bottom. */
async function scrollTo(page: Page, selector: string, where: { top: number } | { bottom: number }) {
  await page.locator(selector).evaluate((el, where) => {
    const r = el.getBoundingClientRect()
    window.scrollBy(0, 'top' in where ? r.top - where.top : r.bottom - (innerHeight - where.bottom))
  }, where)
}

describe('the bench tablet’s toasts', () => {
  it('when the setter takes two jobs and starts one on a tablet, landscape then portrait, then each toast shows alone in the title bar, clear of the Scan ticket button, and the button still opens the scanner', async () => {
    const op = (await openOrderStep(e2e.db.db, { kind: 'setting', key: 'set', status: 'pending' }))!
    await makeStepReady(e2e, op.id)
    const benchId = await benchIdByName(e2e.db.db, 'Setting bench A')

    // Landscape 1024 × 768: take the job, then at once the next one: the second "Taken" shows in the first one's place.
    const landscape = await tablet({ width: 1024, height: 768 })
    await landscape.goto('/bench')
    await landscape.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await landscape.locator(`[data-test=next-for-me] [data-op="${op.id}"] [data-test=claim]`).click()
    await landscape.locator(`[data-test=my-work] [data-op="${op.id}"]`).waitFor()
    expectButtonsClear(await toastsAndButtons(landscape, 'Taken'))
    const second = landscape.locator('[data-test=next-for-me] [data-op]').first()
    const secondId = Number(await second.getAttribute('data-op'))
    await second.locator('[data-test=claim]').click()
    await landscape.locator(`[data-test=my-work] [data-op="${secondId}"]`).waitFor()
    expectButtonsClear(await toastsAndButtons(landscape, 'Taken'))
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
    expectButtonsClear(await toastsAndButtons(portrait, 'Started'))
    await screenshot(portrait, 'bench-toast-portrait', { fullPage: false })
    await portrait.locator('[data-test=scan]').click()
    await portrait.getByRole('dialog', { name: 'Scan a job ticket' }).waitFor()
    await portrait.context().close()
  })

  it('when the setter weighs metal out with Weigh out at the foot of the window, then under the title bar, landscape then portrait, then the toast covers none of the card’s buttons', async () => {
    const db = e2e.db.db
    // A setting step nobody holds, of a piece whose metal names an alloy (so the alloy comes preselected).
    const op = (await openOrderStep(db, {
      kind: 'setting',
      key: 'set',
      status: 'pending',
      where: and(inArray(sql`${s.jobBags.params}->>'metal'`, Object.keys(PIECE_METAL_ALLOY)), isNull(s.operations.claimedBy)),
    }))!
    expect(op, 'an open setting step of a piece in a known alloy').toBeTruthy()
    await makeStepReady(e2e, op.id)
    const benchId = await benchIdByName(db, 'Setting bench A')
    const card = `[data-test=my-work] [data-op="${op.id}"]`
    const weigh = `${card} [data-test=metal-weigh]`

    const weighOut = async (page: Page, grams: string, where: { top: number } | { bottom: number }) => {
      const w = page.locator(weigh)
      await expect.poll(() => w.locator('[data-test=weigh-alloy]').innerText(), { timeout: 10_000 }).not.toBe('')
      for (const c of grams) await w.locator(`[data-test="key-${c}"]`).click()
      await scrollTo(page, `${weigh} [data-test=weigh-submit]`, where)
      await w.locator('[data-test=weigh-submit]').click()
      await expect.poll(() => page.locator('.el-message', { hasText: `Weighed out ${grams}.00 g` }).isVisible(), { timeout: 10_000 }).toBe(true)
      const inView = expectButtonsClear(await toastsAndButtons(page, `Weighed out ${grams}.00 g`, op.id))
      // The button just tapped is among those in the window, clear of the toast, and a tap at its centre still reaches it.
      expect(inView).toContain('weigh-submit')
      return inView
    }

    // Landscape 1024 × 768: Weigh out at the foot of the window (where a toast at the bottom sat over it), then just under the bar.
    const landscape = await tablet({ width: 1024, height: 768 })
    // One step running at a time: the setter pauses what she has running (the other test's job) first.
    const setter = await personIdByEmail(db, 'setter@wrenfield.test')
    const running = await db
      .select({ id: s.operations.id })
      .from(s.operations)
      .where(and(eq(s.operations.claimedBy, setter), eq(s.operations.status, 'running')))
    for (const r of running) {
      const paused = await call(landscape, 'POST', `/api/bench/operations/${r.id}/pause`, { requestId: crypto.randomUUID(), reason: 'end-of-day' })
      expect(paused.status, JSON.stringify(paused.body)).toBe(200)
    }
    await landscape.goto('/bench')
    await landscape.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await landscape.locator(`[data-test=next-for-me] [data-op="${op.id}"] [data-test=claim]`).click()
    await landscape.locator(`${card} [data-test=start]`).click()
    await landscape.locator(weigh).waitFor()
    expect(await weighOut(landscape, '5', { bottom: 4 })).toEqual(expect.arrayContaining(['weigh-submit', 'key-7', 'key-0', 'source-stock']))
    await screenshot(landscape, 'bench-toast-weigh-landscape-foot', { fullPage: false })
    await weighOut(landscape, '3', { top: 60 })
    await screenshot(landscape, 'bench-toast-weigh-landscape-top', { fullPage: false })
    await landscape.context().close()

    // Portrait 800 × 1280: the same card, its keypad beside the choices; Weigh out at the foot of the window.
    const portrait = await tablet({ width: 800, height: 1280 })
    await portrait.goto('/bench')
    await portrait.locator(`[data-test="pick-bench-${benchId}"]`).click()
    await portrait.locator(weigh).waitFor()
    expect(await weighOut(portrait, '2', { bottom: 4 })).toEqual(expect.arrayContaining(['weigh-submit', 'key-7', 'weigh-mode-out']))
    await screenshot(portrait, 'bench-toast-weigh-portrait', { fullPage: false })
    await portrait.context().close()

    const rows = await db
      .select({ weightMg: s.metalMovements.weightMg })
      .from(s.metalMovements)
      .where(and(eq(s.metalMovements.operationId, op.id), eq(s.metalMovements.kind, 'issued')))
    expect(rows.map((r) => r.weightMg).sort((a, b) => a - b)).toEqual([2000, 3000, 5000])
  })
})
