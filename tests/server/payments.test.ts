// Quotes and payments against the local fake provider: the SDK's real calls, webhooks signed as the provider documents.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPayFake, TEST_CARDS, type PayFake } from '../../server/dev/pay-fake'
import { and, count as countRows, eq, sum, type SQL } from 'drizzle-orm'
import type { PgTable } from 'drizzle-orm/pg-core'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId } from '../setup/fixtures'

let t: TestApp, fake: PayFake, http: Server
let sales: Agent, owner: Agent, bench: Agent, manager: Agent
let customerId: number

beforeAll(async () => {
  fake = await startPayFake()
  t = await createTestApp({ PAY_FAKE_URL: fake.url })
  http = createServer(t.app)
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', () => r()))
  fake.webhookUrl = `http://127.0.0.1:${(http.address() as AddressInfo).port}/api/payments/webhook`
  ;[sales, owner, bench, manager] = await Promise.all([
    signedIn(t.app, 'sales'),
    signedIn(t.app, 'owner'),
    signedIn(t.app, 'bench'),
    signedIn(t.app, 'manager'),
  ])
  customerId = await firstCustomerId(t.db)
})
afterAll(async () => {
  await new Promise((r) => http?.close(r))
  await fake?.close()
  await t?.close()
})

const count = async (table: PgTable, where?: SQL) => (await t.db.select({ n: countRows() }).from(table).where(where))[0]!.n

/** Hand-worked: price 1,250.00 GBP = 125000 pence; deposit 30 % = 375.00 (37500); balance 875.00 (87500). */
async function sentQuote(title = 'Engagement ring') {
  const q = await sales.post('/api/quotes', { customerId, title, priceMinor: 125000, currency: 'GBP' })
  expect(q.status, JSON.stringify(q.body)).toBe(201)
  const s = await sales.post(`/api/quotes/${q.body.id}/send`, { version: q.body.version })
  expect(s.status, JSON.stringify(s.body)).toBe(200)
  return s.body
}
const sessionOf = (url: string) => url.split('/pay/')[1]!

describe('quotes and deposits', () => {
  it('when a quote of 1,250.00 GBP is drafted with the 30 % default, then the deposit is 375.00 and the balance 875.00 in minor units', async () => {
    const q = await sentQuote()
    expect(q).toMatchObject({ status: 'sent', currency: 'GBP', priceMinor: 125000, depositMinor: 37500, balanceMinor: 87500 })
    expect(q.links).toHaveLength(1)
    expect(q.links[0]).toMatchObject({ purpose: 'deposit', amountMinor: 37500, currency: 'GBP', status: 'open' })
    // The provider was asked for the same amount (its session, made by the SDK's real call).
    expect(fake.sessions.get(sessionOf(q.links[0].url))).toMatchObject({ amount_total: 37500, currency: 'gbp' })
  })

  it('when the customer pays the deposit on the hosted page, then the signed webhook books it once and the quote is accepted with its order', async () => {
    const q = await sentQuote()
    const declined = await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.declined)
    expect(declined.outcome).toBe('declined')
    expect(await count(s.payments, eq(s.payments.quoteId, q.id))).toBe(0)
    const r = await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
    expect(r.delivery?.status, r.delivery?.body).toBe(200)
    const after = (await sales.get(`/api/quotes/${q.id}`)).body
    expect(after.status).toBe('accepted')
    expect(after.orderId).toBeTypeOf('number')
    expect(after.paidMinor).toBe(37500)
    const money = (await sales.get(`/api/orders/${after.orderId}/money`)).body
    expect(money).toMatchObject({ priceMinor: 125000, depositMinor: 37500, paidMinor: 37500, owedMinor: 87500, depositPaid: true, currency: 'GBP' })
    // A receipt went to the outbox.
    expect(await count(s.outbox, and(eq(s.outbox.kind, 'payment-receipt'), eq(s.outbox.orderId, after.orderId)))).toBe(1)
  })

  it('when a forged signature arrives, then it is refused with 400 and nothing is booked', async () => {
    const q = await sentQuote()
    const session = fake.sessions.get(sessionOf(q.links[0].url))!
    const forged = {
      id: 'evt_forged_1',
      object: 'event' as const,
      type: 'checkout.session.completed',
      created: Math.floor(Date.now() / 1000),
      livemode: false as const,
      api_version: 'x',
      data: { object: { ...session, status: 'complete', payment_status: 'paid', payment_intent: 'pi_forged' } },
    }
    const d = await fake.deliver(forged, { secret: 'whsec_someone_else' })
    expect(d.status).toBe(400)
    expect(JSON.parse(d.body).fields).toHaveProperty('Stripe-Signature')
    expect(await count(s.payments, eq(s.payments.providerRef, 'pi_forged'))).toBe(0)
    expect(await count(s.providerEvents, eq(s.providerEvents.id, 'evt_forged_1'))).toBe(0)
    expect((await sales.get(`/api/quotes/${q.id}`)).body.status).toBe('sent')
  })

  it('when the same event is replayed, then it is booked once', async () => {
    const q = await sentQuote()
    await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
    const ev = fake.events.at(-1)!
    const again = await fake.deliver(ev)
    expect(again.status).toBe(200)
    expect(await count(s.payments, eq(s.payments.quoteId, q.id))).toBe(1)
  })

  it('when 20 deliveries of one event arrive at once, then one payment and one order are booked', async () => {
    const q = await sentQuote('Signet ring')
    const session = fake.sessions.get(sessionOf(q.links[0].url))!
    session.status = 'complete'
    session.payment_status = 'paid'
    session.payment_intent = 'pi_concurrent_1'
    const ev = {
      id: 'evt_concurrent_1',
      object: 'event' as const,
      type: 'checkout.session.completed',
      created: Math.floor(Date.now() / 1000),
      livemode: false as const,
      api_version: 'x',
      data: { object: { ...session } },
    }
    const before = await count(s.orders)
    const all = await Promise.all(Array.from({ length: 20 }, () => fake.deliver(ev)))
    expect(all.map((d) => d.status)).toEqual(Array(20).fill(200))
    expect(await count(s.payments, eq(s.payments.providerRef, 'pi_concurrent_1'))).toBe(1)
    expect(await count(s.orders)).toBe(before + 1)
  })

  it('when a card needs a second step, then nothing is booked until it is confirmed', async () => {
    const q = await sentQuote()
    const r = await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.confirm)
    expect(r.outcome).toBe('confirm')
    expect(await count(s.payments, eq(s.payments.quoteId, q.id))).toBe(0)
    const page = await fetch(`${fake.url}/pay/${sessionOf(q.links[0].url)}/confirm`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: 'answer=yes',
    })
    expect(await page.text()).toContain('Paid')
    expect(await count(s.payments, eq(s.payments.quoteId, q.id))).toBe(1)
  })

  it('when a withdrawn quote is paid anyway, then the payment is on the "to refund" list and the owner alone refunds it through the provider', async () => {
    const q = await sentQuote()
    const session = sessionOf(q.links[0].url)
    const w = await sales.post(`/api/quotes/${q.id}/withdraw`, { version: q.version })
    expect(w.body.status).toBe('withdrawn')
    // The page closed with the provider; a payment already under way still arrives (simulated by reopening it).
    fake.sessions.get(session)!.status = 'open'
    await fake.pay(session, TEST_CARDS.paid)
    const list = (await sales.get('/api/payments/to-refund')).body as { id: number; quoteId: number; amountMinor: number }[]
    const p = list.find((x) => x.quoteId === q.id)!
    expect(p.amountMinor).toBe(37500)
    expect((await sales.get(`/api/quotes/${q.id}`)).body.status).toBe('withdrawn')
    expect((await sales.post(`/api/payments/${p.id}/refund`, {})).status).toBe(403)
    expect((await manager.post(`/api/payments/${p.id}/refund`, {})).status).toBe(403)
    const r = await owner.post(`/api/payments/${p.id}/refund`, { note: 'quote withdrawn' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body).toMatchObject({ amountMinor: -37500, purpose: 'refund', method: 'card' })
    expect(r.body.providerRef).toMatch(/^re_/)
    expect(((await sales.get('/api/payments/to-refund')).body as { quoteId: number }[]).some((x) => x.quoteId === q.id)).toBe(false)
  })

  it('when sales records cash for the balance, then the order owes nothing, with who recorded it; bench users see no money', async () => {
    const q = await sentQuote()
    await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
    const orderId = (await sales.get(`/api/quotes/${q.id}`)).body.orderId
    const cash = await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', purpose: 'balance', amountMinor: 87500 })
    expect(cash.status, JSON.stringify(cash.body)).toBe(201)
    expect(cash.body).toMatchObject({ method: 'cash', amountMinor: 87500, currency: 'GBP', recordedByName: expect.any(String) })
    expect((await sales.get(`/api/orders/${orderId}/money`)).body).toMatchObject({ paidMinor: 125000, owedMinor: 0 })
    expect((await manager.post(`/api/orders/${orderId}/payments`, { method: 'cash', amountMinor: 100 })).status).toBe(403)
    expect((await bench.get(`/api/orders/${orderId}/money`)).status).toBe(403)
    expect((await bench.get(`/api/quotes/${q.id}`)).status).toBe(403)
    const bad = await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', amountMinor: 12.5 })
    expect(bad.status).toBe(400)
    expect(bad.body.fields).toHaveProperty('amountMinor')
  })

  it('when cash is recorded as taken at 10:15 after a card payment at 10:15:40, then the order, the quote and the CSV list the card first; cash taken at 10:14 comes before both', async () => {
    const q = await sentQuote('Signet ring')
    await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
    const orderId = (await sales.get(`/api/quotes/${q.id}`)).body.orderId
    // The provider times a payment to the second; the record dialog offers the minute the money is taken (its seconds are 00).
    await t.db.update(s.payments).set({ receivedAt: '2026-03-02T10:15:40Z' }).where(eq(s.payments.quoteId, q.id))
    const notes = ['after the card, same minute', 'the minute before the card']
    for (const [note, receivedAt] of [
      [notes[0]!, '2026-03-02T10:15:00Z'],
      [notes[1]!, '2026-03-02T10:14:00Z'],
    ])
      expect((await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', amountMinor: 1000, receivedAt, note })).status).toBe(201)
    const listed = (rows: { method: string; note: string }[]) => rows.map((p) => (p.method === 'card' ? 'card' : p.note))
    const expected = [notes[1], 'card', notes[0]]
    expect(listed((await sales.get(`/api/orders/${orderId}/money`)).body.payments)).toEqual(expected)
    expect(listed((await sales.get(`/api/quotes/${q.id}`)).body.payments)).toEqual(expected)
    const csv = (await owner.get('/api/payments/export.csv')).text.split(/\r?\n/)
    const at = (needle: string) => csv.findIndex((l) => l.includes(needle))
    const card = csv.findIndex((l) => l.startsWith('2026-03-02T10:15:40Z,') || l.startsWith('2026-03-02T10:15:40+00:00,'))
    expect(card).toBeGreaterThan(0)
    expect([at(notes[1]!), card, at(notes[0]!)]).toEqual([card - 1, card, card + 1])
  })

  it('when the owner refunds part of one of two payments, then the refunds add up per payment and a refund beyond what is left is refused naming the amount', async () => {
    const q = await sentQuote('Chain')
    await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
    const orderId = (await sales.get(`/api/quotes/${q.id}`)).body.orderId
    // Hand-worked: deposit 375.00 by card, then 100.00 and 200.00 in cash (pence: 37500, 10000, 20000).
    const a = (await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', purpose: 'balance', amountMinor: 10000 })).body
    const b = (await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', purpose: 'balance', amountMinor: 20000 })).body
    const r1 = await owner.post(`/api/payments/${a.id}/refund`, { amountMinor: 6000, note: 'stone returned' })
    expect(r1.status, JSON.stringify(r1.body)).toBe(201)
    expect(r1.body).toMatchObject({ amountMinor: -6000, purpose: 'refund', refundOf: a.id, note: 'stone returned' })
    // 100.00 − 60.00 leaves 40.00 of the first payment: 50.00 is too much, whatever is left on the second.
    const over = await owner.post(`/api/payments/${a.id}/refund`, { amountMinor: 5000 })
    expect(over.status).toBe(400)
    expect(over.body.fields.amountMinor).toContain('4000')
    expect((await owner.post(`/api/payments/${b.id}/refund`, { amountMinor: 5000 })).status).toBe(201)
    expect((await owner.post(`/api/payments/${a.id}/refund`, {})).body).toMatchObject({ amountMinor: -4000, refundOf: a.id })
    const full = await owner.post(`/api/payments/${a.id}/refund`, { amountMinor: 1 })
    expect(full.status).toBe(400)
    expect(full.body.fields.amountMinor).toMatch(/refunded in full/)
    const money = (await sales.get(`/api/orders/${orderId}/money`)).body
    const byId = new Map((money.payments as { id: number; refundedMinor: number }[]).map((p) => [p.id, p.refundedMinor]))
    expect(byId.get(a.id)).toBe(10000)
    expect(byId.get(b.id)).toBe(5000)
    // Paid: 37500 + 10000 + 20000 − 6000 − 5000 − 4000 = 52500.
    expect(money.paidMinor).toBe(52500)
  })

  it('when two refunds of the same payment arrive at once, then together they never return more than was paid', async () => {
    const q = await sentQuote('Bangle')
    await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
    const orderId = (await sales.get(`/api/quotes/${q.id}`)).body.orderId
    const p = (await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', purpose: 'balance', amountMinor: 10000 })).body
    const both = await Promise.all([
      owner.post(`/api/payments/${p.id}/refund`, { amountMinor: 7000 }),
      owner.post(`/api/payments/${p.id}/refund`, { amountMinor: 7000 }),
    ])
    expect(both.map((r) => r.status).sort()).toEqual([201, 400])
    expect(
      -Number(
        (
          await t.db
            .select({ n: sum(s.payments.amountMinor) })
            .from(s.payments)
            .where(eq(s.payments.refundOf, p.id))
        )[0]!.n,
      ),
    ).toBe(7000)
  })

  it('when the owner asks for the money of a past range, then this week’s figures still come with it, 123.45 recorded now included', async () => {
    const [order] = await t.db.select({ id: s.orders.id }).from(s.orders).where(eq(s.orders.status, 'open')).limit(1)
    const past = { from: '2020-01-01', to: '2020-01-31' }
    // ISO 8601 week worked out apart from the app: the week belongs to the year of its Thursday, week 1 holds 4 January.
    const isoWeekNow = () => {
      const [y, m, d] = new Intl.DateTimeFormat('en-CA', { timeZone: 'Europe/London' }).format(new Date()).split('-').map(Number)
      const day = new Date(Date.UTC(y!, m! - 1, d!))
      const thursday = new Date(day.getTime() + (3 - ((day.getUTCDay() + 6) % 7)) * 86_400_000)
      const jan4 = new Date(Date.UTC(thursday.getUTCFullYear(), 0, 4))
      const week1Thursday = new Date(jan4.getTime() + (3 - ((jan4.getUTCDay() + 6) % 7)) * 86_400_000)
      const weekNo = 1 + Math.round((thursday.getTime() - week1Thursday.getTime()) / (7 * 86_400_000))
      return `${thursday.getUTCFullYear()}-W${String(weekNo).padStart(2, '0')}`
    }
    // Asked again (once) when London's Monday 00:00 falls between the first figures and the last: the payment then belongs to
    // the week after the one the first figures counted.
    let week = '',
      weekAfter = '',
      before: { thisWeek: { receivedMinor: number } } = { thisWeek: { receivedMinor: 0 } },
      after: { status: number; body: { thisWeek: { week: string; receivedMinor: number }; weeks: { receivedMinor: number }[] } } | null = null
    for (let attempt = 0; attempt < 2 && (after === null || week !== weekAfter); attempt++) {
      week = isoWeekNow()
      before = (await owner.get('/api/payments/summary').query(past)).body
      const cash = await sales.post(`/api/orders/${order!.id}/payments`, { method: 'cash', purpose: 'deposit', amountMinor: 12345 })
      expect(cash.status, JSON.stringify(cash.body)).toBe(201)
      after = await owner.get('/api/payments/summary').query(past)
      weekAfter = isoWeekNow()
    }
    expect(weekAfter, 'both figures were asked for within one ISO week').toBe(week)
    expect(after!.status).toBe(200)
    expect(after!.body.thisWeek.week).toBe(week)
    expect(after!.body.thisWeek.receivedMinor - before.thisWeek.receivedMinor).toBe(12345)
    // The range's own table holds no money received this week (its rows for later weeks are what is owed then).
    expect(after!.body.weeks.every((w: { receivedMinor: number }) => w.receivedMinor === 0)).toBe(true)
  })

  it('when cash is recorded at 00:30 on a Monday in summer time, then the CSV writes that Monday on the workshop’s clock and the summary counts it in that ISO week', async () => {
    const [order] = await t.db.select({ id: s.orders.id }).from(s.orders).where(eq(s.orders.status, 'open')).limit(1)
    // 2026-07-05T23:30Z is Monday 6 July 2026, 00:30 in London (BST, UTC+1). ISO week by hand: 1 Jan 2026 is a Thursday, so
    // week 1 starts Monday 29 Dec 2025; 6 July is 189 days = 27 weeks later, the first day of week 28.
    const cash = await sales.post(`/api/orders/${order!.id}/payments`, {
      method: 'cash',
      amountMinor: 4321,
      receivedAt: '2026-07-05T23:30:00Z',
      note: 'just after midnight',
    })
    expect(cash.status, JSON.stringify(cash.body)).toBe(201)
    const line = (await owner.get('/api/payments/export.csv')).text.split(/\r?\n/).find((l) => l.includes('just after midnight'))!
    expect(line.startsWith('2026-07-06T00:30:00+01:00,'), line).toBe(true)
    const week = (await owner.get('/api/payments/summary').query({ from: '2026-07-06', to: '2026-07-06' })).body.weeks.find(
      (w: { week: string }) => w.week === '2026-W28',
    )
    expect(week?.receivedMinor).toBe(4321)
  })

  it('when the owner picks one week, then the weeks list only that week and its owed figure leaves out pieces promised the week after', async () => {
    // Two quotes of 1,250.00 with their 375.00 deposits paid: each order owes 875.00 (87500). One is promised Wednesday 5 March 2031,
    // the other Wednesday 12 March 2031. ISO weeks by hand: 1 Jan 2031 is a Wednesday, so week 1 starts Monday 30 Dec 2030;
    // Monday 3 March 2031 is 63 days (9 weeks) later, so 3–9 March is 2031-W10 and 12 March falls in 2031-W11.
    const orderIds: number[] = []
    for (const title of ['Promised in W10', 'Promised in W11']) {
      const q = await sentQuote(title)
      await fake.pay(sessionOf(q.links[0].url), TEST_CARDS.paid)
      orderIds.push((await sales.get(`/api/quotes/${q.id}`)).body.orderId)
    }
    await t.db.update(s.orders).set({ promisedDate: '2031-03-05' }).where(eq(s.orders.id, orderIds[0]!))
    await t.db.update(s.orders).set({ promisedDate: '2031-03-12' }).where(eq(s.orders.id, orderIds[1]!))
    const r = await owner.get('/api/payments/summary').query({ from: '2031-03-03', to: '2031-03-09' })
    expect(r.status).toBe(200)
    expect(r.body.weeks).toEqual([{ week: '2031-W10', receivedMinor: 0, refundedMinor: 0, owedMinor: 87500 }])
    expect(r.body.owedInWeeksMinor).toBe(87500)
    // The card's total still counts every open order: both 875.00 are in it.
    expect(r.body.owedMinor - r.body.owedInWeeksMinor).toBeGreaterThanOrEqual(87500)
    const both = await owner.get('/api/payments/summary').query({ from: '2031-03-03', to: '2031-03-15' })
    expect(both.body.weeks.map((w: { week: string; owedMinor: number }) => [w.week, w.owedMinor])).toEqual([
      ['2031-W10', 87500],
      ['2031-W11', 87500],
    ])
    expect(both.body.owedInWeeksMinor).toBe(175000)
  })

  it('when the owner asks for the CSV and the summary, then the hand-worked amounts appear in major units and by ISO week', async () => {
    const csv = await owner.get('/api/payments/export.csv')
    expect(csv.status).toBe(200)
    expect(csv.text).toContain(',375.00,GBP,')
    expect(csv.text).toContain(',875.00,GBP,')
    expect(csv.text).toContain(',-375.00,GBP,')
    const s = await owner.get('/api/payments/summary')
    expect(s.status).toBe(200)
    expect(s.body.weeks.every((w: { week: string }) => /^\d{4}-W\d{2}$/.test(w.week))).toBe(true)
    expect((await sales.get('/api/payments/summary')).status).toBe(403)
  })
})
