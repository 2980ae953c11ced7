// An order's costing on its detail drawer in Chromium: the owner sees price, cost and margin at estimate and at actual as the API
// answers them, in the workshop's currency; an order with nothing recorded shows the estimate and says the actual comes later; sales never
// see the section.
import { and, asc, desc, eq, inArray, notInArray, sql } from 'drizzle-orm'
import type { Page } from 'playwright-core'
import { describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import type { OrderCosting } from '../../shared/schemas/costing'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

const e2e = useE2E()

/** Pence written as en-GB writes pounds (the demo workshop prices in GBP, two decimals: ISO 4217), by the browser's own Intl, not the app's helper. */
const gbp = (minor: number) => new Intl.NumberFormat('en-GB', { style: 'currency', currency: 'GBP' }).format(minor / 100)
/** "£1,234.50" or "-£12.00" back to pence. */
const pence = (text: string) => {
  const m = /(-?)£([\d,]+)\.(\d\d)/.exec(text.replace('−', '-'))
  if (!m) throw new Error(`not an amount in pounds: ${text}`)
  return (m[1] ? -1 : 1) * (Number(m[2]!.replace(/,/g, '')) * 100 + Number(m[3]))
}

/** Orders of the demo with a finished step, those still in work first; and open orders with nothing recorded at all. */
async function demoOrders() {
  const db = e2e.db.db
  const done = await db
    .selectDistinct({ orderId: s.jobBags.orderId, inWork: sql<boolean>`${s.orders.status} = 'in-work'` })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(and(eq(s.operations.status, 'done'), inArray(s.orders.status, ['open', 'in-work', 'ready', 'collected'])))
    .orderBy(desc(sql`${s.orders.status} = 'in-work'`), asc(s.jobBags.orderId))
  const metal = await db.select({ orderId: s.jobBags.orderId }).from(s.metalMovements).innerJoin(s.jobBags, eq(s.jobBags.id, s.metalMovements.jobBagId))
  const stones = await db
    .select({ orderId: s.jobBags.orderId })
    .from(s.stoneMovements)
    .innerJoin(s.jobBagStones, eq(s.jobBagStones.id, s.stoneMovements.stoneLineId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.jobBagStones.jobBagId))
  const touched = [...new Set([...done.map((d) => d.orderId), ...metal.map((m) => m.orderId), ...stones.map((m) => m.orderId)]), -1]
  const untouched = await db
    .select({ id: s.orders.id })
    .from(s.orders)
    .where(and(eq(s.orders.status, 'open'), notInArray(s.orders.id, touched), inArray(s.orders.id, db.select({ id: s.jobBags.orderId }).from(s.jobBags))))
    .orderBy(asc(s.orders.id))
  return { worked: done.map((d) => d.orderId), untouched: untouched.map((u) => u.id) }
}

/** The costing as the API answers it, asked with the page's own session. */
async function apiCosting(page: Page, orderId: number): Promise<OrderCosting> {
  const r = await page.request.get(`/api/orders/${orderId}/costing`)
  expect(r.status()).toBe(200)
  return (await r.json()) as OrderCosting
}

const cell = (page: Page, row: string, at: 'estimate' | 'actual') => page.locator(`[data-test=order-costing] [data-test=costing-${row}] td[data-at=${at}]`)
const text = async (page: Page, row: string, at: 'estimate' | 'actual', part?: string) =>
  ((await (part ? cell(page, row, at).locator(`[data-test=${part}]`) : cell(page, row, at)).first().innerText()) ?? '').trim()

/** Every figure of one side on screen equals the API's, formatted; and the margin shown is price − cost, its % that over the price. */
async function expectSide(page: Page, c: OrderCosting, at: 'estimate' | 'actual') {
  const side = c[at]
  expect(await text(page, 'price', at)).toBe(gbp(c.priceMinor))
  expect((await text(page, 'metal', at)).split('\n')[0]).toBe(gbp(side.cost.metalMinor))
  expect(await text(page, 'stones', at)).toBe(gbp(side.cost.stonesMinor))
  expect(await text(page, 'outside', at)).toBe(gbp(side.cost.outsideMinor))
  expect(await text(page, 'labour', at)).toBe(gbp(side.cost.labourMinor))
  expect(await text(page, 'cost', at)).toBe(gbp(side.cost.totalMinor))
  expect(await text(page, 'margin', at, 'amount')).toBe(gbp(side.marginMinor))
  expect(await text(page, 'margin', at, 'pct')).toBe(`${side.marginPct!.toFixed(1)} %`)
  await expect(page.locator(`[data-test=costing-caveat-${at}]`).innerText()).resolves.toBe(`At ${at}: ${side.caveat}.`)
  // Hand-checked from the figures on screen: margin = price − cost, margin % = (price − cost) / price, shown to one decimal.
  const price = pence(await text(page, 'price', at))
  const cost = pence(await text(page, 'cost', at))
  expect(pence(await text(page, 'margin', at, 'amount'))).toBe(price - cost)
  // The four lines add up to the cost shown.
  const lines = await Promise.all(['metal', 'stones', 'outside', 'labour'].map(async (r) => pence((await text(page, r, at)).split('\n')[0]!)))
  expect(lines.reduce((a, b) => a + b, 0)).toBe(cost)
  const shownPct = Number((await text(page, 'margin', at, 'pct')).replace(' %', ''))
  expect(Math.abs(shownPct - ((price - cost) / price) * 100)).toBeLessThanOrEqual(0.05)
}

describe('order costing on the order drawer', () => {
  it('when the owner opens a demo order with work done, then the costing shows price, cost and margin at estimate and at actual as the API has them', async () => {
    const { worked } = await demoOrders()
    expect(worked.length, 'the demo has open orders with finished steps').toBeGreaterThan(0)
    const page = await signInPage(await e2e.newContext(), 'owner')
    // The first worked order with a price (the demo prices every order it costs).
    let orderId = 0
    let api: OrderCosting | null = null
    for (const id of worked) {
      const c = await apiCosting(page, id)
      if (c.priceMinor > 0) {
        orderId = id
        api = c
        break
      }
    }
    expect(api, 'a worked demo order with a price').toBeTruthy()
    expect(api!.currency).toBe('GBP')
    expect(api!.workRecorded).toBe(true)
    await page.goto(`/orders/${orderId}`)
    const section = page.locator('[data-test=order-costing]')
    await section.locator('[data-test=costing-cost] td[data-at=actual]').waitFor({ timeout: 15_000 })
    await expect(section.getAttribute('data-state')).resolves.toBe('actual')
    await expectSide(page, api!, 'estimate')
    await expectSide(page, api!, 'actual')
    if (api!.metalAsEstimatedMinor > 0)
      await expect(section.locator('[data-test=costing-metal-as-estimated]').innerText()).resolves.toBe(`${gbp(api!.metalAsEstimatedMinor)} of it as estimated`)
    else await expect(section.locator('[data-test=costing-metal-as-estimated]').count()).resolves.toBe(0)
    await expect(section.locator('[data-test=costing-no-actual]').count()).resolves.toBe(0)
    await section.scrollIntoViewIfNeeded()
    await screenshot(page, 'order-costing-worked', { fullPage: false })
  })

  it('when the owner opens an order with nothing recorded yet, then the costing shows the estimate and says the actual comes once work is recorded', async () => {
    const { untouched } = await demoOrders()
    expect(untouched.length, 'the demo has open orders not started').toBeGreaterThan(0)
    const page = await signInPage(await e2e.newContext(), 'owner')
    const orderId = untouched[0]!
    const api = await apiCosting(page, orderId)
    expect(api.workRecorded).toBe(false)
    await page.goto(`/orders/${orderId}`)
    const section = page.locator('[data-test=order-costing]')
    await section.locator('[data-test=costing-no-actual]').waitFor({ timeout: 15_000 })
    await expect(section.locator('[data-test=costing-no-actual]').innerText()).resolves.toMatch(/cost and margin at actual come once work is recorded/)
    await expect(section.locator('td[data-at=actual]').count()).resolves.toBe(0)
    await expect(section.locator('thead').innerText()).resolves.not.toMatch(/At actual/)
    await expect(section.locator('[data-test=costing-caveat-actual]').count()).resolves.toBe(0)
    if (api.priceMinor > 0) await expectSide(page, api, 'estimate')
    else expect(await text(page, 'cost', 'estimate')).toBe(gbp(api.estimate.cost.totalMinor))
    await section.scrollIntoViewIfNeeded()
    await screenshot(page, 'order-costing-not-started', { fullPage: false })
  })

  it('when the costing cannot be had, then the section says so and offers to try again', async () => {
    const { worked } = await demoOrders()
    const page = await signInPage(await e2e.newContext(), 'owner')
    await page.route('**/api/orders/*/costing', (r) =>
      r.fulfill({ status: 503, contentType: 'application/json', body: JSON.stringify({ code: 'unavailable', message: 'The database is not answering' }) }),
    )
    await page.goto(`/orders/${worked[0]}`)
    const error = page.locator('[data-test=order-costing] [data-test=costing-error]')
    await error.waitFor({ timeout: 15_000 })
    await expect(error.innerText()).resolves.toMatch(/The costing could not be worked out/)
    await page.unroute('**/api/orders/*/costing')
    await error.getByRole('button', { name: 'Try again' }).click()
    await page.locator('[data-test=order-costing][data-state=actual]').waitFor({ timeout: 15_000 })
  })

  it('when sales open the same order, then its money shows and the costing section does not', async () => {
    const { worked } = await demoOrders()
    const page = await signInPage(await e2e.newContext(), 'sales')
    await page.goto(`/orders/${worked[0]}`)
    await page.locator('[data-test=order-money] [data-test=money-price]').waitFor({ timeout: 15_000 })
    await expect(page.locator('[data-test=order-costing]').count()).resolves.toBe(0)
  })
})
