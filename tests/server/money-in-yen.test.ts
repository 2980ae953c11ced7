// An order priced in a currency without decimals, end to end on the server: its own price (no quote) is what the payments
// side asks, the deposit and the cash taken stay in whole yen, and the receipt and the owner's CSV write yen as yen.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, desc, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId } from '../setup/fixtures'

let t: TestApp
let sales: Agent
let owner: Agent

beforeAll(async () => {
  t = await createTestApp()
  sales = await signedIn(t.app, 'sales')
  owner = await signedIn(t.app, 'owner')
  await t.db.update(s.workshops).set({ currency: 'JPY' })
})
afterAll(async () => {
  await t?.close()
})

describe('a workshop pricing in yen', () => {
  it('when an order priced ¥150,000 takes a ¥45,000 cash deposit, then the money, the receipt and the CSV are in whole yen', async () => {
    const c = { id: await firstCustomerId(t.db) }
    const o = await sales.post('/api/orders', { customerId: c.id, title: 'Yen ring', dueDate: '2031-09-01', priceQuotedMinor: 150_000 })
    expect(o.status, JSON.stringify(o.body)).toBe(201)
    expect(o.body).toMatchObject({ priceQuotedMinor: 150_000, currency: 'JPY' })
    // ISO 4217: JPY has no minor unit, so ¥150,000 is 150,000 minor units; the demo's 30 % deposit is ¥45,000.
    // (A rule that assumed two decimals would have read the stored price as ¥1,500.)
    const before = (await sales.get(`/api/orders/${o.body.id}/money`)).body
    expect(before).toMatchObject({ currency: 'JPY', priceMinor: 150_000, depositMinor: 45_000, owedMinor: 150_000 })
    const cash = await sales.post(`/api/orders/${o.body.id}/payments`, { method: 'cash', purpose: 'deposit', amountMinor: 45_000 })
    expect(cash.status, JSON.stringify(cash.body)).toBe(201)
    expect((await sales.get(`/api/orders/${o.body.id}/money`)).body).toMatchObject({ paidMinor: 45_000, owedMinor: 105_000, depositPaid: true })
    // Intl en-GB writes yen as "JP¥45,000" (ECMA-402 currency formatting, no decimals for JPY).
    const mail = (
      await t.db
        .select({ text: s.outbox.text })
        .from(s.outbox)
        .where(and(eq(s.outbox.orderId, o.body.id), eq(s.outbox.kind, 'payment-receipt')))
        .orderBy(desc(s.outbox.id))
        .limit(1)
    )[0]!
    expect(mail.text).toContain('JP¥45,000')
    expect(mail.text).toContain('JP¥105,000')
    const csv = (await owner.get('/api/payments/export.csv')).text.split('\r\n').find((l) => l.includes(o.body.number))!
    expect(csv).toContain(',45000,JPY,')
  })
})
