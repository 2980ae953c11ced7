// Quotes and deposits in Chromium: sales quotes from the promise check and from an order, e-mails it, the customer pays the deposit
// on the local fake's hosted payment page (a declined card first), the order turns paid live, the owner sees the week's money.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { BrowserContext, Page } from 'playwright-core'
import { startPayFake, TEST_CARDS, type PayFake } from '../../server/dev/pay-fake'
import { and, asc, count, eq, inArray, ne, notExists } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { screenshot, signInPage, useE2E } from '../setup/e2e'

let fake: PayFake
let customerContext: BrowserContext
let page: Page
beforeAll(async () => {
  fake = await startPayFake()
})
afterAll(async () => {
  await fake?.close()
})
const e2e = useE2E({ env: () => ({ PAY_FAKE_URL: fake.url }) })
beforeAll(async () => {
  fake.webhookUrl = `${e2e.url}/api/payments/webhook`
  // The provider sends the customer back to the workshop's public address: this test's server.
  await e2e.db.db.update(s.workshops).set({ publicUrl: e2e.url })
  // The customer: a browser of their own, never signed in.
  customerContext = await e2e.newContext()
  page = await signInPage(await e2e.newContext(), 'sales')
})

/** An Element Plus field's input, whether the data-test attribute lands on the input itself or on its wrapper. */
const field = (scope: Page | ReturnType<Page['locator']>, name: string) => scope.locator(`input[data-test=${name}], [data-test=${name}] input`).first()
const text = async (scope: Page, sel: string) => ((await scope.locator(sel).first().textContent()) ?? '').replace(/\s+/g, ' ').trim()
/** Pounds as en-GB writes them (the browser context's locale), by Intl (ICU) — the figures below are also written out by hand. */
const gbp = (minor: number) => new Intl.NumberFormat('en-GB', { style: 'currency', currency: 'GBP' }).format(minor / 100)

describe('quotes and deposits', () => {
  let orderId = 0
  let quoteNumber = ''
  let linkUrl = ''
  let draftNumber = ''

  it('when sales writes a quote from a promise check, then a price of 0 is refused by the Price field and nothing is kept or sent; kept as a draft with a price, it keeps the routing, the promised date and how sure it is', async () => {
    await page.goto('/promise')
    await page.locator('[data-test=promise-routing]').click()
    await page.locator('.el-select-dropdown__item:visible').first().click()
    const answer = page.waitForResponse((r) => r.url().endsWith('/api/promise/check') && r.request().method() === 'POST', { timeout: 30_000 })
    await page.locator('[data-test=promise-check]').click()
    const check = (await (await answer).json()) as {
      routing: { id: number }
      fixedPlan: { date: string }
      range: { p50: { date: string }; p80: { date: string }; p95: { date: string } } | null
    }
    await page.locator('[data-test=promise-make-quote]').click()
    const dialog = page.locator('.el-dialog', { hasText: 'Quote from the promise check' })
    await dialog.waitFor()
    await dialog.locator('[data-test=quote-customer]').click()
    await page.locator('.el-select-dropdown__item:visible').first().click()
    // A stone line's Remove button stands clear of the number fields beside it, so its whole word shows and takes the click.
    await dialog.getByRole('button', { name: 'Add stones' }).click()
    const remove = dialog.locator('[data-test=quote-stone-remove]').last()
    await remove.waitFor()
    const carats = dialog.locator('.stone-row').last().locator('.el-input-number').last()
    const caratBasis = dialog.locator('.stone-row').last().locator('.el-select')
    const stoneCost = dialog.locator('.stone-row').last().locator('.mmf')
    const [caratsBox, basisBox, costBox, removeBox] = [
      await carats.boundingBox(),
      await caratBasis.boundingBox(),
      await stoneCost.boundingBox(),
      await remove.boundingBox(),
    ]
    expect(caratsBox!.x + caratsBox!.width).toBeLessThanOrEqual(basisBox!.x)
    expect(basisBox!.x + basisBox!.width).toBeLessThanOrEqual(costBox!.x)
    expect(costBox!.x + costBox!.width).toBeLessThanOrEqual(removeBox!.x)
    // What the browser finds at the button's first letter is the button itself, not a field drawn over it.
    const atFirstLetter = await remove.evaluate((b) => {
      const r = b.getBoundingClientRect()
      return b.contains(document.elementFromPoint(r.left + 2, r.top + r.height / 2))
    })
    expect(atFirstLetter).toBe(true)
    expect(((await remove.textContent()) ?? '').trim()).toBe('Remove')
    await screenshot(page, 'payments-quote-stone-line', { fullPage: false })
    await remove.click()
    // A price of 0: the dialog says so by the Price field, and neither a quote nor an e-mail is made.
    const kept = async () => ({
      quotes: (await e2e.db.db.select({ n: count() }).from(s.quotes))[0]!.n,
      mails: (await e2e.db.db.select({ n: count() }).from(s.outbox).where(eq(s.outbox.kind, 'quote')))[0]!.n,
    })
    const before = await kept()
    await field(dialog, 'quote-price').fill('0')
    await dialog.locator('[data-test=quote-save-send]').click()
    const priceItem = dialog.locator('.el-form-item', { has: page.locator('[data-test=quote-price]') })
    await priceItem.locator('.el-form-item__error', { hasText: 'The price must be more than zero' }).waitFor()
    await screenshot(page, 'payments-quote-price-zero', { fullPage: false })
    expect(await dialog.isVisible()).toBe(true)
    expect(await kept()).toEqual(before)
    await field(dialog, 'quote-price').fill('640')
    // Typing a price clears the reason.
    await priceItem.locator('.el-form-item__error').waitFor({ state: 'detached' })
    await field(dialog, 'quote-title').click()
    // 30 % of £640.00 is £192.00, leaving £448.00 (hand-worked).
    await dialog.locator('[data-test=quote-deposit-amount]', { hasText: '£192.00 now, £448.00 at collection' }).waitFor()
    await screenshot(page, 'payments-quote-from-promise', { fullPage: false })
    await dialog.locator('[data-test=quote-save]').click()
    const done = page.locator('[data-test=promise-quoted]')
    await done.waitFor({ timeout: 15_000 })
    const number = /Quote (\S+) kept as a draft/.exec((await done.textContent()) ?? '')?.[1]
    expect(number).toMatch(/^Q\d\d-\d{4}$/)
    draftNumber = number!
    const q = (
      await e2e.db.db
        .select({
          status: s.quotes.status,
          priceMinor: s.quotes.priceMinor,
          depositMinor: s.quotes.depositMinor,
          promised: s.quotes.promisedDate,
          details: s.quotes.details,
          confidence: s.quotes.confidence,
        })
        .from(s.quotes)
        .where(eq(s.quotes.number, number!))
    )[0]!
    expect(q).toMatchObject({ status: 'drafted', priceMinor: 64000, depositMinor: 19200 })
    expect(q.details.routingId).toBe(check.routing.id)
    // The suggested date: P80 when the range is later than the fixed plan, else the fixed-plan date (as the promise page keeps it).
    const suggested = check.range && check.range.p80.date > check.fixedPlan.date ? check.range.p80.date : check.fixedPlan.date
    expect(q.promised).toBe(suggested)
    if (check.range) expect(q.confidence).toMatchObject({ p50: check.range.p50.date, p80: check.range.p80.date, p95: check.range.p95.date })
  })

  it('when sales writes a quote from an order and e-mails it, then the order shows the price and the deposit owed with a payment link', async () => {
    const [ws] = await e2e.db.db.select({ depositPct: s.workshops.depositPct, currency: s.workshops.currency }).from(s.workshops)
    // The demo workshop asks 30 % and prices in pounds; the figures below are worked for that.
    expect(ws).toEqual({ depositPct: 30, currency: 'GBP' })
    const db = e2e.db.db
    const [o] = await db
      .select({ id: s.orders.id })
      .from(s.orders)
      .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
      .where(
        and(
          inArray(s.orders.status, ['open', 'quoted']),
          ne(s.customers.email, ''),
          notExists(db.select({ id: s.payments.id }).from(s.payments).where(eq(s.payments.orderId, s.orders.id))),
          notExists(db.select({ id: s.quotes.id }).from(s.quotes).where(eq(s.quotes.orderId, s.orders.id))),
        ),
      )
      .orderBy(asc(s.orders.id))
      .limit(1)
    expect(o, 'an open order of a customer with an e-mail').toBeTruthy()
    orderId = o!.id
    await page.goto(`/orders/${orderId}`)
    await page.locator('[data-test=order-money]').waitFor({ timeout: 15_000 })
    await page.locator('[data-test=money-make-quote]').click()
    const dialog = page.locator('.el-dialog', { hasText: 'Quote for order' })
    await dialog.waitFor()
    await field(dialog, 'quote-price').fill('1250')
    await dialog
      .locator('[data-test=quote-description] textarea, textarea[data-test=quote-description]')
      .first()
      .fill('Made to the customer’s sketch, hallmarked.')
    // 30 % of £1,250.00 is £375.00, leaving £875.00 at collection (hand-worked).
    await dialog.locator('[data-test=quote-deposit-amount]', { hasText: '£375.00 now, £875.00 at collection' }).waitFor()
    await dialog.locator('[data-test=quote-save-send]').click()
    await dialog.waitFor({ state: 'hidden', timeout: 20_000 })
    const q = (
      await e2e.db.db
        .select({ id: s.quotes.id, number: s.quotes.number, status: s.quotes.status, priceMinor: s.quotes.priceMinor, depositMinor: s.quotes.depositMinor })
        .from(s.quotes)
        .where(eq(s.quotes.orderId, orderId))
    )[0]!
    expect(q).toMatchObject({ status: 'sent', priceMinor: 125000, depositMinor: 37500 })
    quoteNumber = q.number
    const links = await e2e.db.db
      .select({ url: s.paymentLinks.url, amountMinor: s.paymentLinks.amountMinor, status: s.paymentLinks.status, purpose: s.paymentLinks.purpose })
      .from(s.paymentLinks)
      .where(eq(s.paymentLinks.quoteId, q.id))
    expect(links).toHaveLength(1)
    expect(links[0]).toMatchObject({ amountMinor: 37500, status: 'open', purpose: 'deposit' })
    linkUrl = links[0]!.url
    // The order's figures follow the quote, live (the panel reloads on the quote's and the link's events).
    await page.locator('[data-test=money-deposit-state]', { hasText: 'deposit owed £375.00' }).waitFor({ timeout: 20_000 })
    expect(await text(page, '[data-test=money-price]')).toBe('£1,250.00')
    expect(await text(page, '[data-test=money-paid]')).toBe('£0.00')
    expect(await text(page, '[data-test=money-owed]')).toBe('£1,250.00')
    const open = page.locator('[data-test=order-money] [data-purpose=deposit][data-status=open] [data-test=link-open]')
    await open.waitFor()
    expect(await open.getAttribute('href')).toBe(linkUrl)
    // The order's own price figure stays as taken; when it differs from the quote's, the drawer says what the quote asks.
    const own = (await e2e.db.db.select({ minor: s.orders.priceQuotedMinor }).from(s.orders).where(eq(s.orders.id, orderId)))[0]!
    if (own.minor !== 125000) await page.locator('[data-test=order-price-quote-note]', { hasText: 'the quote asks £1,250.00' }).waitFor()
    await screenshot(page, 'payments-order-owed', { fullPage: false })
  })

  it('when the customer’s card is declined on the payment page, then nothing is booked and the deposit stays owed', async () => {
    const customer = await customerContext.newPage()
    await customer.goto(linkUrl)
    expect(await text(customer, '[data-test=amount]')).toBe('£375.00')
    await customer.locator('#card').fill(TEST_CARDS.declined)
    await customer.locator('button[type=submit]').click()
    await customer.locator('[data-test=error]', { hasText: /declined/ }).waitFor()
    await screenshot(customer, 'payments-card-declined', { fullPage: false })
    await customer.close()
    const [n] = await e2e.db.db.select({ n: count() }).from(s.payments).where(eq(s.payments.orderId, orderId))
    expect(n!.n).toBe(0)
    expect(await text(page, '[data-test=money-deposit-state]')).toBe('deposit owed £375.00')
    expect(await text(page, '[data-test=money-paid]')).toBe('£0.00')
  })

  it('when the customer pays the deposit with the test card, then the sales screen turns the deposit paid live with £375.00', async () => {
    // A mark on the sales page that a reload would wipe.
    await page.evaluate(() => {
      ;(window as unknown as { stillHere: boolean }).stillHere = true
    })
    const customer = await customerContext.newPage()
    await customer.goto(linkUrl)
    await customer.locator('#card').fill(TEST_CARDS.paid)
    await customer.locator('button[type=submit]').click()
    await customer.locator('[data-test=paid]').waitFor({ timeout: 20_000 })
    await page.locator('[data-test=money-deposit-state]', { hasText: 'deposit paid' }).waitFor({ timeout: 30_000 })
    expect(await page.evaluate(() => (window as unknown as { stillHere?: boolean }).stillHere)).toBe(true)
    const booked = await e2e.db.db
      .select({ amountMinor: s.payments.amountMinor, method: s.payments.method, providerRef: s.payments.providerRef })
      .from(s.payments)
      .where(and(eq(s.payments.orderId, orderId), eq(s.payments.toRefund, false)))
    const p = {
      paid: booked.reduce((a, x) => a + x.amountMinor, 0),
      n: booked.length,
      card: booked.every((x) => x.method === 'card' && x.providerRef !== null),
    }
    expect(p).toEqual({ paid: 37500, n: 1, card: true })
    // £1,250.00 − £375.00 = £875.00 still owed (hand-worked); the screen agrees with the database.
    await page.locator('[data-test=money-paid]', { hasText: gbp(p.paid) }).waitFor({ timeout: 10_000 })
    expect(await text(page, '[data-test=money-paid]')).toBe('£375.00')
    expect(await text(page, '[data-test=money-owed]')).toBe('£875.00')
    expect(await text(page, '[data-test=money-payments]')).toContain('Card (online)')
    await screenshot(page, 'payments-order-deposit-paid', { fullPage: false })
    // Back to the workshop's page: thanks, and nothing about the workshop's own data.
    await customer.locator('[data-test=back]').click()
    await customer.locator('[data-test=payment-done]', { hasText: 'Thank you' }).waitFor()
    await screenshot(customer, 'payments-customer-thanks', { fullPage: false })
    await customer.close()
  })

  it('when the owner opens Money, then this week’s received amount is the database’s sum for the week', async () => {
    const ownerContext = await e2e.newContext()
    try {
      const owner = await signInPage(ownerContext, 'owner')
      // The ISO week (Monday start) of now in the workshop's zone, by PostgreSQL.
      // Raw SQL on purpose: the week's takings reckoned by PostgreSQL's own ISO-week arithmetic, apart from the app's code.
      const thisWeek = async () =>
        (
          await e2e.db.pool.query(`select coalesce(sum(amount_minor), 0)::int as received,
          to_char(now() at time zone 'Europe/London', 'IYYY-"W"IW') as week from payments
        where amount_minor > 0 and not to_refund and date_trunc('week', received_at at time zone 'Europe/London') = date_trunc('week', now() at time zone 'Europe/London')`)
        ).rows[0] as { received: number; week: string }
      // The page is read between two readings of the week; when London's Monday 00:00 falls between them, it is read again.
      let w = await thisWeek(),
        weekAfter = ''
      for (let attempt = 0; attempt < 2 && weekAfter !== w.week; attempt++) {
        if (attempt > 0) w = await thisWeek()
        await owner.goto('/money')
        await owner.locator('[data-test=money-week-received]').waitFor({ timeout: 15_000 })
        weekAfter = (await thisWeek()).week
      }
      expect(weekAfter, 'the page was read within one ISO week').toBe(w.week)
      // The deposit paid earlier in this file counts, unless that was last week.
      const { rows: paid } = await e2e.db.pool.query(
        `select 1 from payments where amount_minor = 37500 and date_trunc('week', received_at at time zone 'Europe/London') = date_trunc('week', now() at time zone 'Europe/London')`,
      )
      if (paid.length > 0) expect(w.received).toBeGreaterThanOrEqual(37500)
      expect(await text(owner, '[data-test=money-week-received]')).toBe(gbp(w.received))
      const [year, week] = w.week.split('-')
      expect(await text(owner, '[data-test=money-this-week]')).toContain(`${week} ${year}`)
      // Owed: each open order's price (its latest quote's, else the order's own price in pounds) less what is paid, never below nothing.
      // Raw SQL on purpose: what is owed reckoned in one SQL statement, apart from the app's code.
      const {
        rows: [owed],
      } = await e2e.db.pool.query(`select coalesce(sum(greatest(0, price - paid)), 0)::int as owed from (
          select coalesce((select q.price_minor from quotes q where q.order_id = o.id and q.status in ('accepted', 'sent', 'drafted') order by q.status = 'accepted' desc, q.id desc limit 1), o.price_quoted_minor) as price,
            coalesce((select sum(p.amount_minor) from payments p where p.order_id = o.id and not p.to_refund), 0) as paid
          from orders o where o.status not in ('collected', 'cancelled')) t`)
      expect(await text(owner, '[data-test=money-owed-total]')).toBe(gbp(owed.owed))
      // The deposit paid on an order whose work has not started is held.
      expect(await text(owner, '[data-test=money-held]')).toContain('£375.00')
      await screenshot(owner, 'payments-owner-money')
      // The owner sets the deposit asked by default and the quote validity; the database keeps them.
      await owner.goto('/settings')
      const rules = owner.locator('[data-test=settings-money]')
      await field(rules, 'settings-deposit-pct').fill('40')
      await field(rules, 'settings-quote-days').fill('21')
      await rules.locator('[data-test=settings-no-metal]').click()
      await rules.locator('[data-test=settings-money-save]').click()
      await owner.getByText('Quote and deposit rules saved').waitFor()
      const [ws] = await e2e.db.db
        .select({ depositPct: s.workshops.depositPct, quoteValidDays: s.workshops.quoteValidDays, noMetalBeforeDeposit: s.workshops.noMetalBeforeDeposit })
        .from(s.workshops)
      expect(ws).toEqual({ depositPct: 40, quoteValidDays: 21, noMetalBeforeDeposit: true })
      await rules.scrollIntoViewIfNeeded()
      await screenshot(owner, 'payments-owner-settings', { fullPage: false })
    } finally {
      await ownerContext.close()
    }
  })

  it('when sales opens the sent e-mail page, then the quote’s e-mail to the customer carries the amounts and the payment link', async () => {
    await page.goto('/outbox')
    const row = page.locator('[data-test=outbox-table] .el-table__row', { hasText: quoteNumber })
    await row.first().waitFor()
    expect(await row.first().textContent()).toContain('Quote with payment link')
    await row.first().click()
    await page.locator('.el-drawer').getByText('Plain text').click()
    const mail = (await page.locator('[data-test=outbox-text]').textContent()) ?? ''
    // The piece is named in quotation marks, whatever its name.
    expect(mail).toMatch(new RegExp(`Thank you for your enquiry about ".+"\\. Here is our quote ${quoteNumber}:`))
    expect(mail).toContain('£1,250.00')
    expect(mail).toContain('£375.00')
    expect(mail).toContain('£875.00')
    expect(mail).toContain(linkUrl)
    await page.locator('.el-drawer').getByText('As the customer sees it').click()
    await screenshot(page, 'payments-outbox-quote', { fullPage: false })
  })

  it('when a bench user opens the job bag of the paid order, then no price or payment is shown', async () => {
    const benchContext = await e2e.newContext()
    try {
      const bench = await signInPage(benchContext, 'bench')
      const [b] = await e2e.db.db.select({ id: s.jobBags.id }).from(s.jobBags).where(eq(s.jobBags.orderId, orderId)).orderBy(asc(s.jobBags.id)).limit(1)
      expect(b, 'the order has a job bag').toBeTruthy()
      await bench.goto(`/job-bags/${b!.id}`)
      await bench.locator('[data-test=bag-number]').waitFor({ timeout: 15_000 })
      expect(await bench.locator('[data-test=order-money]').count()).toBe(0)
      expect(await bench.locator('body').textContent()).not.toMatch(/£\d/)
      // Neither the quotes screen nor the money API is open to the bench.
      await bench.goto('/quotes')
      await bench.locator('[data-test=not-allowed]').waitFor()
      const statuses = await bench.evaluate(
        async (id) => Promise.all([`/api/quotes`, `/api/orders/${id}/money`].map(async (u) => (await fetch(u)).status)),
        orderId,
      )
      expect(statuses).toEqual([403, 403])
      // And the sales user sees the same bag with its money.
      await page.goto(`/job-bags/${b!.id}`)
      await page.locator('[data-test=money-deposit-state]', { hasText: 'deposit paid' }).waitFor({ timeout: 15_000 })
      expect(await text(page, '[data-test=money-owed]')).toBe('£875.00')
    } finally {
      await benchContext.close()
    }
  })

  it('when sales opens Quotes, then the paid quote reads agreed with what is paid and owed, a search finding it alone counts "1 quote", and the draft can be taken back', async () => {
    await page.goto('/quotes')
    await page.locator('.el-segmented').getByText('All', { exact: true }).click()
    const row = page.locator('[data-test=quotes-table] .el-table__row', { hasText: quoteNumber })
    await row.waitFor()
    const [q] = await e2e.db.db.select({ status: s.quotes.status }).from(s.quotes).where(eq(s.quotes.number, quoteNumber))
    // Paying the deposit accepts the quote.
    expect(q!.status).toBe('accepted')
    expect(await row.textContent()).toContain('Agreed')
    await row.locator('[data-test=quote-row-paid]', { hasText: '£375.00' }).waitFor()
    expect(((await row.locator('[data-test=quote-row-owed]').textContent()) ?? '').trim()).toBe('£875.00')
    await screenshot(page, 'payments-quotes-list', { fullPage: false })
    // Its number finds that quote alone: one quote, said in the singular.
    await field(page, 'quote-search').fill(quoteNumber)
    await page.locator('[data-test=quotes-count]', { hasText: /^\s*1 quote\s*$/ }).waitFor()
    await field(page, 'quote-search').fill('')
    await page.locator('[data-test=quotes-table] .el-table__row', { hasText: draftNumber }).waitFor()
    await page.locator('[data-test=quotes-table] .el-table__row', { hasText: draftNumber }).click()
    const drawer = page.locator('[data-test=quote-drawer]')
    await drawer.locator('[data-test=quote-price]', { hasText: '£640.00' }).waitFor()
    expect(((await drawer.locator('[data-test=quote-deposit]').textContent()) ?? '').trim()).toBe('£192.00')
    expect(((await drawer.locator('[data-test=quote-owed]').textContent()) ?? '').trim()).toBe('£640.00')
    await drawer.locator('[data-test=quote-withdraw]').click()
    await page.locator('.el-message-box').getByRole('button', { name: 'Take it back' }).click()
    await drawer.locator('[data-test=quote-status]', { hasText: 'Taken back' }).waitFor()
    // Taken back, it asks for nothing any more.
    await drawer.locator('[data-test=quote-owed]', { hasText: '£0.00' }).waitFor()
    await drawer.locator('[data-test=quote-deposit-state]').waitFor({ state: 'detached' })
    const [d] = await e2e.db.db.select({ status: s.quotes.status }).from(s.quotes).where(eq(s.quotes.number, draftNumber))
    expect(d!.status).toBe('withdrawn')
    await screenshot(page, 'payments-quote-taken-back', { fullPage: false })
  })

  it('when sales records the balance paid in cash, then the order owes nothing and the payment names who took it', async () => {
    await page.goto(`/orders/${orderId}`)
    await page.locator('[data-test=money-owed]', { hasText: '£875.00' }).waitFor({ timeout: 15_000 })
    await page.locator('[data-test=money-record]').click()
    const dialog = page.locator('[data-test=payment-record]').locator('xpath=ancestor-or-self::div[contains(@class, "el-dialog")]').first()
    await dialog.waitFor()
    // The balance owed is offered: £1,250.00 − £375.00 = £875.00.
    expect(await field(dialog, 'payment-amount').inputValue()).toBe('875.00')
    await field(dialog, 'payment-note').fill('Paid at collection')
    await dialog.locator('[data-test=payment-save]').click()
    await page.locator('[data-test=money-owed]', { hasText: '£0.00' }).waitFor({ timeout: 15_000 })
    const rows = await e2e.db.db
      .select({ method: s.payments.method, purpose: s.payments.purpose, amountMinor: s.payments.amountMinor, role: s.users.role, name: s.users.name })
      .from(s.payments)
      .leftJoin(s.users, eq(s.users.id, s.payments.recordedBy))
      .where(eq(s.payments.orderId, orderId))
      .orderBy(asc(s.payments.id))
    expect(rows.map((r) => [r.method, r.purpose, r.amountMinor])).toEqual([
      ['card', 'deposit', 37500],
      ['cash', 'balance', 87500],
    ])
    expect(rows[1]!.role).toBe('sales')
    expect(await text(page, '[data-test=money-paid]')).toBe('£1,250.00')
    expect(await text(page, '[data-test=money-payments]')).toContain(rows[1]!.name!)
    await screenshot(page, 'payments-order-paid-in-full', { fullPage: false })
  })

  it('when the workshop is registered for VAT, then the order’s money and the quote dialog say the VAT in the price with the VAT number', async () => {
    // 20 % is the UK standard rate as HMRC publishes it. Hand-worked: £1,250.00 × 20/120 = £208.33, leaving £1,041.67;
    // £1,850.00 × 20/120 = £308.33, leaving £1,541.67.
    const registered = { vatRegistered: true, vatNumber: 'GB 123 4567 89', vatRateBasisPoints: 2000 }
    const not = { vatRegistered: false, vatNumber: '' }
    // An order keeps the VAT terms it was agreed under: this one's quote and order are put as if agreed while registered; its
    // payments keep theirs, taken without VAT.
    const agreedUnder = async (terms: typeof registered | typeof not) => {
      await e2e.db.db.update(s.orders).set(terms).where(eq(s.orders.id, orderId))
      await e2e.db.db.update(s.quotes).set(terms).where(eq(s.quotes.orderId, orderId))
    }
    await e2e.db.db.update(s.workshops).set(registered)
    await agreedUnder(registered)
    try {
      await page.goto(`/orders/${orderId}`)
      const number = 'VAT registration no. GB 123 4567 89'
      await page.locator('[data-test=money-vat]', { hasText: `of which VAT at 20%: £208.33 (£1,041.67 before VAT) · ${number}` }).waitFor({ timeout: 15_000 })
      // The payments table's VAT column: both payments were taken before the workshop registered, so they carry none.
      expect(await page.locator('[data-test=money-payment-vat]').allTextContents()).toEqual(['—', '—'])
      await page.locator('[data-test=money-payments-vat]', { hasText: 'VAT in what is paid: £0.00 of the £208.33 in the price.' }).waitFor()
      await page.locator('[data-test=money-make-quote]').click()
      const dialog = page.locator('.el-dialog', { hasText: 'Quote for order' })
      await dialog.waitFor()
      await field(dialog, 'quote-price').fill('1850')
      await dialog.locator('[data-test=quote-vat]', { hasText: `of which VAT at 20%: £308.33 (£1,541.67 before VAT) · ${number}` }).waitFor()
      // The deposit stays a share of what the customer pays, VAT included: the owner set 40 % above, so £740.00 now and
      // £1,110.00 at collection.
      await dialog.locator('[data-test=quote-deposit-amount]', { hasText: '£740.00 now, £1,110.00 at collection' }).waitFor()
      await screenshot(page, 'payments-quote-vat', { fullPage: false })
      await dialog.getByRole('button', { name: 'Cancel' }).click()
      await dialog.waitFor({ state: 'hidden' })
    } finally {
      await e2e.db.db.update(s.workshops).set(not)
      await agreedUnder(not)
    }
  })
})
