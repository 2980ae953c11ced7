// The owner's insights screen in Chromium: comparison tables with totals, charts drawn on canvas, drill-down to time records, suggestions, job costing.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { asc, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { OUTSIDE_RATIO_WORDS, ratioBelieved } from '../../shared/domain/estimate'
import { screenshot, signInPage, useE2E } from '../setup/e2e'
import { finishedStep, openOrderStep } from '../setup/fixtures'

const e2e = useE2E()
let page: Page
beforeAll(async () => {
  page = await signInPage(await e2e.newContext(), 'owner')
})

/** Pixels of a chart's canvas that are not blank (transparent or white): proof something was drawn. */
const inkedPixels = (p: Page, testId: string) =>
  p
    .locator(`[data-test=${testId}] canvas`)
    .first()
    .evaluate((c: HTMLCanvasElement) => {
      const ctx = c.getContext('2d')!
      const { data } = ctx.getImageData(0, 0, c.width, c.height)
      let n = 0
      for (let i = 0; i < data.length; i += 4) if (data[i + 3]! > 0 && !(data[i]! > 245 && data[i + 1]! > 245 && data[i + 2]! > 245)) n++
      return n
    })

describe('insights as the owner', () => {
  it('when the owner opens insights, then the table by kind has rows and a total, and both charts are drawn', async () => {
    await page.goto('/insights')
    await page.locator('[data-test=insights-comparison] .el-table__row').first().waitFor()
    expect(await page.locator('.mg-page-head h1').textContent()).toBe('Estimates and actual hours')
    // Seeded history (server/db/seed.ts): nine bench kinds with finished work.
    expect(await page.locator('[data-test=insights-comparison] .el-table__body .el-table__row').count()).toBeGreaterThanOrEqual(8)
    expect(await page.locator('[data-test=insights-comparison] .el-table__footer').textContent()).toContain('Total')
    await page.locator('[data-test=insights-scatter] canvas').first().waitFor()
    await page.locator('[data-test=insights-trend] canvas').first().waitFor()
    await page.waitForTimeout(300)
    expect(await inkedPixels(page, 'insights-scatter')).toBeGreaterThan(2000)
    expect(await inkedPixels(page, 'insights-trend')).toBeGreaterThan(2000)
    await page.locator('[data-test=insights-suggestions]').waitFor()
    await page.locator('[data-test=insights-costing] .el-table__row').first().waitFor()
    await screenshot(page, 'insights-overview')
  })

  it('when the table by kind is shown, then the bias and MAPE figures are said in plain words beside them', async () => {
    const words = page.locator('[data-test=insights-reading]')
    await words.waitFor()
    const t = (await (await page.request.get('/api/insights/comparison?groupBy=kind')).json()).total
    // The figures recomputed here from every finished operation's estimate and actual minutes (the chart data), independently of the table:
    // bias = (Σ actual − Σ estimate) ÷ Σ estimate; MAPE = mean over operations of |actual − estimate| ÷ actual; both over the operations
    // whose actual ÷ estimate is believed (the band the promise check learns from), the others left out.
    const all: { estimateMinutes: number; actualMinutes: number }[] = await (await page.request.get('/api/insights/scatter')).json()
    const points = all.filter((p) => ratioBelieved(p.actualMinutes / p.estimateMinutes))
    expect(t.leftOut).toBe(all.length - points.length)
    const est = points.reduce((x, p) => x + p.estimateMinutes, 0),
      act = points.reduce((x, p) => x + p.actualMinutes, 0)
    const bias = ((act - est) / est) * 100
    const mape = (points.reduce((x, p) => x + Math.abs(p.actualMinutes - p.estimateMinutes) / p.actualMinutes, 0) / points.length) * 100
    expect(Math.abs(t.biasPct - bias)).toBeLessThan(0.06)
    expect(Math.abs(t.mapePct - mape)).toBeLessThan(0.06)
    const pct = (x: number) => `${Math.abs(x).toFixed(1)} %`
    expect((await words.locator('[data-test=insights-bias-words]').textContent())?.trim()).toBe(
      `Bias ${bias > 0 ? '+' : '-'}${pct(t.biasPct)}: taken together, the work took ${pct(t.biasPct)} ${act > est ? 'longer' : 'less time'} than estimated (${t.actualHours.toFixed(2)} h taken against ${t.estimateHours.toFixed(2)} h estimated, ${points.length} operations).`,
    )
    expect(Math.abs(t.actualHours - act / 60)).toBeLessThanOrEqual(0.005)
    expect(Math.abs(t.estimateHours - est / 60)).toBeLessThanOrEqual(0.005)
    expect((await words.locator('[data-test=insights-mape-words]').textContent())?.trim()).toBe(
      `MAPE ${pct(t.mapePct)}: on average, an operation's estimate was ${pct(t.mapePct)} off the time it actually took, too high or too low.`,
    )
    // The short column names explain themselves when pointed at.
    await page.locator('[data-test=insights-bias-head]').hover()
    await page.locator('.el-popper', { hasText: 'Plus means the work took longer than estimated' }).waitFor()
    await page.locator('[data-test=insights-mape-head]').hover()
    await page.locator('.el-popper', { hasText: 'Over- and underestimates do not cancel out' }).waitFor()
    await screenshot(page, 'insights-words')
  })

  it('when a row is clicked, then the drawer lists its operations and their time records', async () => {
    await page.locator('[data-test=insights-comparison] .el-table__body .el-table__row', { hasText: 'Stone setting' }).click()
    const drawer = page.locator('[data-test=insights-drill]')
    await drawer.getByText('Time behind: Stone setting').waitFor()
    await drawer.locator('.el-table__expand-icon').first().click()
    await drawer.locator('.el-table__expanded-cell .el-table__row').first().waitFor()
    await screenshot(page, 'insights-drill')
    // Every column fits the drawer: the last one ("Source") ends inside the table's visible box, not cut to "routi…".
    const table = drawer.locator('.el-table').first()
    const source = table.locator('.el-table__header th', { hasText: 'Source' }).first()
    const [tb, sb] = [(await table.boundingBox())!, (await source.boundingBox())!]
    expect(sb.x + sb.width, `Source ends at ${sb.x + sb.width}, the table at ${tb.x + tb.width}`).toBeLessThanOrEqual(tb.x + tb.width + 1)
    const href = await drawer.locator('[data-test=insights-drill-csv]').getAttribute('href')
    expect(href).toMatch(/^\/api\/insights\/records\?groupBy=kind&key=\d+&format=csv$/)
    const r = await page.request.get(href!)
    expect(r.headers()['content-disposition']).toMatch(/^attachment; filename="time-records-kind-\d+\.csv"$/)
    await page.keyboard.press('Escape')
  })

  it('when the "By person" tab is chosen, then people are the rows and the CSV link follows the tab', async () => {
    await page.locator('.el-tabs__item', { hasText: 'By person' }).click()
    await page.locator('[data-test=insights-comparison] .el-table__row', { hasText: 'Ines Harrowby' }).waitFor()
    expect(await page.locator('[data-test=insights-csv]').getAttribute('href')).toBe('/api/insights/comparison?groupBy=person&format=csv')
    const r = await page.request.get('/api/insights/comparison?groupBy=person&format=csv')
    expect(r.status()).toBe(200)
    const lines = (await r.text()).split('\r\n')
    // The first column names the person; their id comes last.
    expect(lines[0]).toBe('person,operations,estimate_hours,actual_hours,bias_hours,bias_pct,direction,mape_pct,left_out,person_id')
    const shown = await page.locator('[data-test=insights-comparison] .el-table__body .el-table__row td:first-child').allTextContents()
    expect(shown.map((x) => x.trim())).toContain(lines[1]!.split(',')[0])
    expect(lines[1]!.split(',').at(-1)).toMatch(/^\d+$/)
    await screenshot(page, 'insights-by-person')
  })

  it('when a setter started and finished a step within seconds, then the table leaves it out, says so and the drill-down marks it', async () => {
    const db = e2e.db.db
    // A demo setting step not yet started, finished in 12 seconds against a 100-minute estimate: 0.2 ÷ 100 = 0.002, under a tenth.
    const op = (await openOrderStep(db, { kind: 'setting', status: 'pending' }))!
    const [who] = await db.select({ id: s.people.id }).from(s.people).orderBy(asc(s.people.id)).limit(1)
    await finishedStep(db, op.id, {
      finishedAt: sql`now()`,
      estimateMinutes: 100,
      records: [{ personId: who!.id, start: sql`now() - interval '12 seconds'`, end: sql`now()` }],
    })
    await page.goto('/insights')
    const note = page.locator('[data-test=insights-left-out]')
    await note.waitFor()
    const table = (await (await page.request.get('/api/insights/comparison?groupBy=kind')).json()) as {
      rows: { key: string; label: string }[]
      total: { leftOut: number }
    }
    const t = table.total
    const settingKey = table.rows.find((r) => r.label === 'Stone setting')!.key
    expect(t.leftOut).toBeGreaterThanOrEqual(1)
    const words = (await note.textContent())!.replace(/\s+/g, ' ').trim()
    expect(words).toContain(`${t.leftOut} operation${t.leftOut === 1 ? '' : 's'} left out of every figure in this table`)
    expect(words).toContain(OUTSIDE_RATIO_WORDS)
    expect(await note.isVisible()).toBe(true)
    await page.locator('[data-test=insights-comparison] .el-table__body .el-table__row', { hasText: 'Stone setting' }).click()
    const drawer = page.locator('[data-test=insights-drill]')
    await drawer.getByText('Time behind: Stone setting').waitFor()
    await drawer.locator('[data-test=insights-drill-left-out]').waitFor()
    const d = (await (await page.request.get(`/api/insights/records?groupBy=kind&key=${settingKey}`)).json()) as {
      operations: { operationId: number; leftOut: boolean }[]
    }
    expect(d.operations.find((o) => o.operationId === op.id)?.leftOut).toBe(true)
    expect(await drawer.locator('[data-test=insights-drill-left-out-tag]').count()).toBe(d.operations.filter((o) => o.leftOut).length)
    await screenshot(page, 'insights-left-out')
    await page.keyboard.press('Escape')
  })

  it('when job costing is shown, then every margin figure has beside it what it could not count, and the figures are the server’s', async () => {
    const costing = page.locator('[data-test=insights-costing]')
    await costing.locator('.el-table__body .el-table__row').first().waitFor()
    // Every margin cell (at estimate and at actual, each row and the total) holds the figure and, in the same cell, the words of what it counts.
    const cells = await costing.locator('.el-table__body td, .el-table__footer td').evaluateAll((tds) =>
      tds
        .filter(
          (td) =>
            (/\d %/.test(td.textContent ?? '') && td.querySelector('[data-test=margin-caveat]') !== null) ||
            td.querySelector('[data-test=margin-at-estimate], [data-test=margin-at-actual]') !== null,
        )
        .map((td) => ({
          hasFigure: /\d+\.\d %/.test(td.textContent ?? ''),
          caveat: td.querySelector('[data-test=margin-caveat]')?.textContent?.trim() ?? '',
        })),
    )
    const rows = await costing.locator('.el-table__body .el-table__row').count()
    expect(cells.length).toBe(2 * rows + 2)
    // The words come from a fixed list (shared/domain/costing.ts): all four counted, or only what is missing.
    const words =
      /^(on some orders: )?((no metal weight estimated|no metal weighed yet|no metal weighed: metal counted as estimated|metal weighed on some pieces only|metal weighed on some pieces only: the others counted as estimated|no alloy price for the day|base or mixed metal not priced|stone costs not entered|stones not counted back|outside work not costed|some outside work not costed)(; |$))+$/
    for (const c of cells) {
      expect(c.hasFigure).toBe(true)
      if (c.caveat !== 'metal, stones, outside work and labour counted') expect(c.caveat).toMatch(words)
    }
    // The first row on screen carries the server's figures for that order (its own API answer, formatted as the table does).
    const api = (await page.evaluate(async () => (await fetch('/api/insights/costing', { credentials: 'same-origin' })).json())) as {
      currency: string
      rows: {
        orderNumber: string
        costAtEstimateMinor: number
        metalAtActualMinor: number | null
        metalAsEstimatedMinor: number
        caveatAtEstimate: string
        caveatAtActual: string
      }[]
      total: { orders: number; metalAsEstimatedOrders: number; caveatAtActual: string }
    }
    const first = page.locator('[data-test=insights-costing] .el-table__body .el-table__row').first()
    const number = (await first.locator('.mg-mono').textContent())!.trim()
    const row = api.rows.find((r) => r.orderNumber === number)!
    // Pence in the demo's GBP (ISO 4217: 2 decimals) written as the browser's locale writes pounds (ECMA-402 Intl currency formatting).
    expect(api.currency).toBe('GBP')
    const locale = await page.evaluate(() => navigator.language)
    const money = (minor: number) => new Intl.NumberFormat(locale, { style: 'currency', currency: 'GBP' }).format(minor / 100)
    expect(await first.textContent()).toContain(money(row.costAtEstimateMinor))
    // Metal with nothing weighed is "not weighed", its estimate counted in its place — never £0.
    expect(await first.locator('[data-test=cost-parts-actual]').textContent()).toContain(
      row.metalAtActualMinor === null ? `metal not weighed (${money(row.metalAsEstimatedMinor)} as estimated)` : `metal ${money(row.metalAtActualMinor)}`,
    )
    expect((await first.locator('[data-test=margin-caveat]').allTextContents()).map((x) => x.trim())).toEqual([row.caveatAtEstimate, row.caveatAtActual])
    // Some demo orders were weighed in and out: their metal is counted.
    expect(api.rows.some((r) => (r.metalAtActualMinor ?? 0) > 0)).toBe(true)
    // Below the table, in full: how many orders count their metal as estimated, and what the total's margins could not count.
    const metalNote = page.locator('[data-test=insights-costing-metal-note]')
    expect(api.total.metalAsEstimatedOrders).toBeGreaterThan(0)
    expect((await metalNote.textContent())!.replace(/\s+/g, ' ')).toContain(
      `${api.total.metalAsEstimatedOrders} of ${api.total.orders} orders had pieces with no metal weighed`,
    )
    const totalCaveat = page.locator('[data-test=insights-costing-total-caveat-actual]')
    expect((await totalCaveat.textContent())!.replace(/\s+/g, ' ').trim()).toBe(`Total at actual: ${api.total.caveatAtActual}.`)
    // Nothing of those words is cut off: each line fits inside the panel and its box holds all its text.
    const fits = await page.locator('[data-test=insights-costing-total-notes] > div').evaluateAll((els) =>
      els.map((el) => {
        const panel = el.closest('.mg-panel')!.getBoundingClientRect()
        const box = el.getBoundingClientRect()
        return box.right <= panel.right + 0.5 && el.scrollWidth <= el.clientWidth + 1
      }),
    )
    expect(fits.length).toBeGreaterThanOrEqual(2)
    expect(fits.every(Boolean)).toBe(true)
    // At the browser's width the table's columns fit its panel: the margin at actual is not cut off at the right edge.
    const overflow = await costing
      .locator('.el-table__body-wrapper .el-scrollbar__wrap')
      .evaluate((el) => ({ scroll: el.scrollWidth, client: el.clientWidth, viewport: innerWidth }))
    expect(overflow.viewport).toBeGreaterThanOrEqual(1440)
    expect(overflow.scroll, JSON.stringify(overflow)).toBeLessThanOrEqual(overflow.client)
    expect(await page.locator('[data-test=insights-costing-note]').textContent()).toContain('Cost = metal')
    await page.locator('[data-test=insights-costing]').scrollIntoViewIfNeeded()
    await screenshot(page, 'insights-costing')
  })

  it('when the owner accepts a suggested estimate, then the question and the confirmation name the step, not its key', async () => {
    type S = {
      routingName: string
      routingVersion: number
      stepKey: string
      stepName: string
      suggested: { baseMinutes: number; perStoneMinutes: number; changePct: number } | null
    }
    const learned: { steps: S[] } = await (await page.request.get('/api/estimates/learned')).json()
    // The screen lists the largest changes first.
    const s = learned.steps.filter((x) => x.suggested).sort((a, b) => Math.abs(b.suggested!.changePct) - Math.abs(a.suggested!.changePct))[0]!
    expect(s, 'the seeded history offers a suggestion').toBeTruthy()
    expect(s.stepName).not.toBe(s.stepKey)
    const minutes = s.suggested!.perStoneMinutes ? `${s.suggested!.baseMinutes} + ${s.suggested!.perStoneMinutes}/stone` : `${s.suggested!.baseMinutes} min`
    // Steps whose minutes also count size, stone bands or a learning curve get no figure, and the screen says which (seed: the cuff's polishing counts its length).
    const unfitted = learned.steps.filter((x) => (x as S & { unfitted: boolean }).unfitted)
    expect(unfitted.map((x) => x.stepName)).toContain('Polish highlights')
    for (const u of unfitted) expect(u.suggested).toBeNull()
    expect(await page.locator('[data-test=insights-unfitted]').textContent()).toContain('Polish highlights in Etched cuff')
    const row = page.locator('[data-test=insights-suggestions] .el-table__body .el-table__row').first()
    await row.scrollIntoViewIfNeeded()
    expect(await row.locator('td').first().textContent()).toContain(s.stepName)
    await row.locator('[data-test=insights-accept]').click()
    const question = page.locator('.el-popconfirm', { hasText: 'New orders will use them' })
    await question.waitFor()
    expect(await question.locator('.el-popconfirm__main').textContent()).toContain(
      `Write ${minutes} for “${s.stepName}” into “${s.routingName}”? New orders will use them.`,
    )
    await screenshot(page, 'insights-accept-question')
    await question.getByRole('button', { name: 'Accept' }).click()
    const message = page.locator('.el-message', { hasText: s.stepName })
    await message.waitFor()
    expect((await message.textContent())?.trim()).toBe(`“${s.stepName}” in ${s.routingName} now takes ${minutes} (routing version ${s.routingVersion + 1})`)
    // The list of changes accepted lately names the step too.
    await page.getByText(`${s.routingName} · ${s.stepName}: `).first().waitFor()
    await screenshot(page, 'insights-accepted')
  })

  it('when the manager tries the insights screen, then it is not for their role', async () => {
    const ctx = await e2e.newContext()
    const m = await signInPage(ctx, 'manager')
    await m.goto('/insights')
    await m.waitForURL((u) => u.pathname !== '/insights', { timeout: 10_000 })
    expect(new URL(m.url()).pathname).toBe('/not-allowed')
    await ctx.close()
  })
})
