// Quotes: the price above zero, the state rules (drafted → sent → accepted, withdrawn or expired), the e-mail's wording and the daily money reminders sent by the timer.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { PDFParse } from 'pdf-parse'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPayFake, TEST_CARDS, type PayFake } from '../../server/dev/pay-fake'
import { startDigestTimer } from '../../server/mail/digest-timer'
import { createMailer } from '../../server/mail/transport'
import { loadConfig } from '../../server/config'
import { dayjs } from '../../server/lib/time'
import { count as countRows, eq, inArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId } from '../setup/fixtures'
import { expectFieldError } from './helpers'

let t: TestApp, fake: PayFake, http: Server
let sales: Agent, manager: Agent
let customerId: number, tz: string

beforeAll(async () => {
  fake = await startPayFake()
  t = await createTestApp({ PAY_FAKE_URL: fake.url })
  http = createServer(t.app)
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', () => r()))
  fake.webhookUrl = `http://127.0.0.1:${(http.address() as AddressInfo).port}/api/payments/webhook`
  ;[sales, manager] = await Promise.all([signedIn(t.app, 'sales'), signedIn(t.app, 'manager')])
  customerId = await firstCustomerId(t.db)
  tz = (await t.db.select({ timeZone: s.workshops.timeZone }).from(s.workshops).orderBy(s.workshops.id).limit(1))[0]!.timeZone
})
afterAll(async () => {
  await new Promise((r) => http?.close(r))
  await fake?.close()
  await t?.close()
})

const drafted = async (o: Record<string, unknown> = {}) => {
  const q = await sales.post('/api/quotes', { customerId, title: 'Signet ring', priceMinor: 125000, currency: 'GBP', ...o })
  expect(q.status, JSON.stringify(q.body)).toBe(201)
  return q.body
}
const send = async (q: { id: number; version: number }) => {
  const r = await sales.post(`/api/quotes/${q.id}/send`, { version: q.version })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body
}

/** How many quotes and quote e-mails the database holds: a refused request must leave both as they were. */
const stored = async () => ({
  quotes: (await t.db.select({ n: countRows() }).from(s.quotes))[0]!.n,
  mails: (await t.db.select({ n: countRows() }).from(s.outbox).where(eq(s.outbox.kind, 'quote')))[0]!.n,
})

describe('the price', () => {
  it('when a quote is written with a price of 0, then it is refused with 400 naming priceMinor, and nothing is stored or e-mailed', async () => {
    const before = await stored()
    const r = await sales.post('/api/quotes', { customerId, title: 'Signet ring', priceMinor: 0, currency: 'GBP' })
    expectFieldError(r, 'priceMinor', /^must be more than zero$/)
    expect(await stored()).toEqual(before)
  })

  it('when a draft’s price is changed to 0, then the change is refused with 400 naming priceMinor and the draft keeps its price', async () => {
    const q = await drafted()
    const r = await sales.patch(`/api/quotes/${q.id}`, { priceMinor: 0, version: q.version })
    expectFieldError(r, 'priceMinor', /more than zero/)
    expect((await sales.get(`/api/quotes/${q.id}`)).body).toMatchObject({ priceMinor: 125000, version: q.version })
  })

  it('when a draft kept with a price of 0 is sent, then sending is refused with 400 naming priceMinor and no e-mail goes out', async () => {
    const q = await drafted()
    // A draft from before the price had to be above zero: written straight to the table, as the old rule allowed.
    await t.db.update(s.quotes).set({ priceMinor: 0, depositMinor: 0 }).where(eq(s.quotes.id, q.id))
    const before = await stored()
    const r = await sales.post(`/api/quotes/${q.id}/send`, { version: q.version })
    expectFieldError(r, 'priceMinor', /more than zero/)
    expect(await stored()).toEqual(before)
    expect((await sales.get(`/api/quotes/${q.id}`)).body.status).toBe('drafted')
  })
})

describe('the quote e-mail', () => {
  it('when a quote is sent, then the e-mail names the piece in quotation marks and says the amounts and the dates in words', async () => {
    const q = await drafted({
      title: 'Bezel-set solitaire ring',
      description: 'Made to your sketch.',
      priceMinor: 64000,
      promisedDate: '2031-03-07',
      validUntil: '2031-03-14',
    })
    const sent = await send(q)
    const mails = (await manager.get('/api/outbox?kind=quote&pageSize=100')).body.items as { id: number; subject: string }[]
    const mine = mails.filter((m) => m.subject.includes(sent.number))
    expect(mine).toHaveLength(1)
    expect(mine[0]!.subject).toMatch(new RegExp(`: quote ${sent.number} for "Bezel-set solitaire ring"$`))
    const text = (await manager.get(`/api/outbox/${mine[0]!.id}`)).body.text as string
    const lines = text.split('\n')
    expect(lines).toContain(`Thank you for your enquiry about "Bezel-set solitaire ring". Here is our quote ${sent.number}:`)
    expect(lines).toContain('Made to your sketch.')
    // £640.00 with the demo workshop's 30 % deposit: £192.00 now and £448.00 at collection (hand-worked).
    expect(lines).toContain('Price: £640.00')
    expect(lines).toContain('Deposit to start the work: £192.00')
    expect(lines).toContain('Balance at collection: £448.00')
    // 1 January 2031 is a Wednesday, so 1 March is a Saturday, 7 March and 14 March are Fridays (hand-worked).
    expect(lines).toContain('Ready by: Friday 7 March 2031')
    expect(lines).toContain('This quote stands until Friday 14 March 2031.')
    expect(text).not.toMatch(/asking us to make/)
  })
})

describe('quote states', () => {
  it('when the quote is printed, then its metal is named as the customer reads it and its stones as count × what', async () => {
    const q = await drafted({
      title: 'Pavé band',
      details: { metal: 'gold-18ct', stones: [{ description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25 }] },
    })
    const r = await sales
      .get(`/api/quotes/${q.id}/pdf`)
      .buffer(true)
      .parse((res, cb) => {
        const chunks: Buffer[] = []
        res.on('data', (c: Buffer) => chunks.push(c))
        res.on('end', () => cb(null, Buffer.concat(chunks)))
      })
    expect(r.status).toBe(200)
    const parser = new PDFParse({ data: new Uint8Array(r.body as Buffer) })
    const text = (await parser.getText()).text.replace(/\s+/g, ' ')
    await parser.destroy()
    expect(text).toContain('Metal: 18 ct gold')
    expect(text).not.toContain('gold-18ct')
    expect(text).toContain('Stones: 18 × round diamonds of 1.5 mm, 0.25 ct')
  })

  it('when a draft is changed, sent and accepted, then each step moves it on, and a sent quote can no longer be changed', async () => {
    const q = await drafted()
    expect(q.status).toBe('drafted')
    const edited = await sales.patch(`/api/quotes/${q.id}`, { title: 'Signet ring, 18 ct', version: q.version })
    expect(edited.status, JSON.stringify(edited.body)).toBe(200)
    const sent = await send(edited.body)
    expect(sent).toMatchObject({ status: 'sent', title: 'Signet ring, 18 ct' })
    const change = await sales.patch(`/api/quotes/${q.id}`, { priceMinor: 99000, version: sent.version })
    expect(change.status).toBe(409)
    expect(change.body.error).toMatch(/sent quote cannot be edited/)
    const accepted = await sales.post(`/api/quotes/${q.id}/accept`, { version: sent.version })
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(200)
    expect(accepted.body).toMatchObject({ status: 'accepted', orderId: expect.any(Number) })
    expect((await sales.post(`/api/quotes/${q.id}/withdraw`, { version: accepted.body.version })).status).toBe(409)
  })

  it('when a sent quote is withdrawn, then sending or accepting it again is refused with 409 saying it is withdrawn, and its payment link closes', async () => {
    const sent = await send(await drafted())
    const w = await sales.post(`/api/quotes/${sent.id}/withdraw`, { version: sent.version })
    expect(w.body).toMatchObject({ status: 'withdrawn', withdrawnAt: expect.any(String) })
    expect(w.body.links.map((l: { status: string }) => l.status)).toEqual(['expired'])
    const again = await sales.post(`/api/quotes/${sent.id}/send`, { version: w.body.version })
    expect(again.status).toBe(409)
    expect(again.body.error).toBe('A withdrawn quote cannot be sent')
    expect((await sales.post(`/api/quotes/${sent.id}/accept`, { version: w.body.version })).status).toBe(409)
  })

  it('when a sent quote is edited with an old version, then the edit is refused as stale', async () => {
    const q = await drafted()
    expect((await sales.patch(`/api/quotes/${q.id}`, { title: 'A', version: q.version })).status).toBe(200)
    expect((await sales.patch(`/api/quotes/${q.id}`, { title: 'B', version: q.version })).status).toBe(409)
  })
})

describe('daily money reminders', () => {
  it('when the day runs, then a quote ending within 3 days is reminded once, a lapsed one expires, a piece ready to collect gets its balance; a second run sends nothing more', async () => {
    const today = dayjs().tz(tz).format('YYYY-MM-DD')
    const soon = await send(await drafted({ title: 'Pendant ending soon', validUntil: dayjs(today).add(2, 'day').format('YYYY-MM-DD') }))
    const later = await send(await drafted({ title: 'Pendant ending later', validUntil: dayjs(today).add(10, 'day').format('YYYY-MM-DD') }))
    const lapsed = await send(await drafted({ title: 'Pendant lapsed' }))
    await t.db
      .update(s.quotes)
      .set({ validUntil: dayjs(today).subtract(1, 'day').format('YYYY-MM-DD') })
      .where(eq(s.quotes.id, lapsed.id))
    // A piece ready to collect: 1,250.00 GBP, deposit 375.00 paid by card, so 875.00 is still owed (hand-worked).
    const paid = await send(await drafted({ title: 'Ring ready to collect' }))
    await fake.pay(paid.links[0].url.split('/pay/')[1]!, TEST_CARDS.paid)
    const orderId = (await sales.get(`/api/quotes/${paid.id}`)).body.orderId as number
    await t.db.update(s.orders).set({ status: 'ready' }).where(eq(s.orders.id, orderId))

    // The timer at 08:00 workshop time today (after the 07:30 start).
    const at = dayjs.tz(`${today} 08:00`, tz).toDate()
    const deps = {
      db: t.db,
      realtime: t.realtime,
      mailer: createMailer(loadConfig({ DATABASE_URL: t.url, SESSION_SECRET: 'test-secret-test-secret', NODE_ENV: 'test' })),
    }
    const outbox = async (kind: string) =>
      (await manager.get(`/api/outbox?kind=${kind}&pageSize=100`)).body.items as { id: number; subject: string; orderId: number | null }[]
    const timer = startDigestTimer(deps, { clock: () => at, everyMs: 3_600_000 })
    try {
      await timer.tick()
      const quoteReminders = await outbox('quote-reminder')
      expect(quoteReminders.filter((m) => m.subject.includes(soon.number))).toHaveLength(1)
      expect(quoteReminders.some((m) => m.subject.includes(later.number) || m.subject.includes(lapsed.number))).toBe(false)
      expect((await sales.get(`/api/quotes/${lapsed.id}`)).body.status).toBe('expired')
      const balance = (await outbox('balance-reminder')).filter((m) => m.orderId === orderId)
      expect(balance).toHaveLength(1)
      const text = (await manager.get(`/api/outbox/${balance[0]!.id}`)).body.text as string
      expect(text).toContain('£875.00')

      // The same day again, from the timer and from a restarted server's timer: nothing more goes out.
      const count = async () =>
        (
          await t.db
            .select({ n: countRows() })
            .from(s.outbox)
            .where(inArray(s.outbox.kind, ['quote-reminder', 'balance-reminder']))
        )[0]!.n
      const before = await count()
      await timer.tick()
      const restarted = startDigestTimer(deps, { clock: () => at, everyMs: 3_600_000 })
      await restarted.tick()
      restarted.stop()
      expect(await count()).toBe(before)
    } finally {
      timer.stop()
    }
  })
})
