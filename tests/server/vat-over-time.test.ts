// VAT on the customer's documents stays true over time: the terms in force are kept on each quote, order and payment, so a
// document made again after the rate or the registration changed says what it said; the payment that settles an order carries
// the rest of the price's VAT, so deposit and balance add up to it; the balance reminder says the VAT in the balance; the
// accountant's file gives each payment's rate and VAT as taken; a VAT number is refused unless it has a UK number's shape (as we
// remember HMRC's formats: GB or XI, then 9 digits or 12 with a branch; GBGD and 000–499, GBHA and 500–999) — checked when the
// VAT details change, so a number stored before the check holds back no other setting. 20 % is the UK standard rate, 5 % the
// reduced rate, 17.5 % the standard rate before 2011, as HMRC publishes them. Every figure is worked by hand beside its check.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { eq } from 'drizzle-orm'
import { PDFParse } from 'pdf-parse'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPayFake, type PayFake } from '../../server/dev/pay-fake'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import * as s from '../../server/db/schema/index'
import { sendMoneyReminders } from '../../server/services/quotes'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId, firstWorkshopId } from '../setup/fixtures'
import { expectFieldError } from './helpers'

let t: TestApp, pay: PayFake, smtp: FakeSmtp, http: Server
let sales: Agent, owner: Agent, manager: Agent
let customerId: number

beforeAll(async () => {
  pay = await startPayFake()
  smtp = await startFakeSmtp()
  t = await createTestApp({ PAY_FAKE_URL: pay.url, SMTP_URL: smtp.url })
  smtp.useDb(t.db)
  http = createServer(t.app)
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', () => r()))
  pay.webhookUrl = `http://127.0.0.1:${(http.address() as AddressInfo).port}/api/payments/webhook`
  ;[sales, owner, manager] = await Promise.all([signedIn(t.app, 'sales'), signedIn(t.app, 'owner'), signedIn(t.app, 'manager')])
  customerId = await firstCustomerId(t.db)
})
afterAll(async () => {
  await new Promise((r) => http?.close(r))
  await smtp?.close()
  await pay?.close()
  await t?.close()
})

const NUMBER = 'GB 123 4567 89'
const SHAPE = /^must be a UK VAT number: GB or XI and 9 digits \(12 with a branch number\), GBGD and 000–499, or GBHA and 500–999, such as GB 123 4567 89$/
const settings = async () => (await owner.get('/api/workshop')).body
/** The settings as they are, with `change` on top: what the settings page sends. */
const putSettings = async (change: Record<string, unknown>) => {
  const { id: _id, publicUrlSuggestion: _s, ...rest } = await settings()
  return owner.put('/api/workshop', { ...rest, ...change })
}
const changeSettings = async (change: Record<string, unknown>) => {
  const r = await putSettings(change)
  expect(r.status, JSON.stringify(r.body)).toBe(200)
}
const registeredAt20 = () => changeSettings({ vatRegistered: true, vatNumber: NUMBER, vatRatePct: 20 })
/** The rate goes down to 5 % under a new number, then the workshop leaves VAT altogether. */
const settingsChangeLater = async () => {
  await changeSettings({ vatRatePct: 5, vatNumber: 'GB 987 6543 21' })
  await changeSettings({ vatRegistered: false })
}

const quote = async (title: string, priceMinor: number, depositMinor?: number) => {
  const q = await sales.post('/api/quotes', { customerId, title, priceMinor, depositMinor, currency: 'GBP' })
  expect(q.status, JSON.stringify(q.body)).toBe(201)
  return q.body as { id: number; number: string; version: number }
}
const send = async (q: { id: number; version: number }) => {
  const sent = await sales.post(`/api/quotes/${q.id}/send`, { version: q.version })
  expect(sent.status, JSON.stringify(sent.body)).toBe(200)
  return sent.body as { id: number; number: string; version: number }
}
const accept = async (q: { id: number; version: number }) => {
  const r = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body.orderId as number
}
const cash = async (orderId: number, purpose: 'deposit' | 'balance', amountMinor: number) => {
  const r = await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', purpose, amountMinor })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body as { id: number; vat: unknown }
}
const pdfText = async (quoteId: number) => {
  const r = await sales
    .get(`/api/quotes/${quoteId}/pdf`)
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
  return text
}
/** The e-mails of a kind about an order (or naming a quote in their subject), oldest first, as their lines. */
const mails = async (kind: string, match: (m: { subject: string; orderId: number | null }) => boolean) => {
  const items = (await manager.get(`/api/outbox?kind=${kind}&pageSize=100`)).body.items as { id: number; subject: string; orderId: number | null }[]
  const mine = items.filter(match).sort((a, b) => a.id - b.id)
  return Promise.all(mine.map(async (m) => ((await manager.get(`/api/outbox/${m.id}`)).body.text as string).split('\n')))
}
const money = async (orderId: number) => (await sales.get(`/api/orders/${orderId}/money`)).body
const csvRow = async (find: (cells: string[]) => boolean) => {
  const lines = (await owner.get('/api/payments/export.csv')).text.trim().split('\r\n')
  const header = lines[0]!.split(',')
  const row = lines
    .slice(1)
    .map((l) => l.split(','))
    .find(find)
  return row && Object.fromEntries(header.map((h, i) => [h, row[i]]))
}

describe('documents made again after the VAT settings change', () => {
  it('when a quote was issued and a deposit paid at 20 %, then after the rate goes to 5 % and the workshop leaves VAT they still say 20 %', async () => {
    await registeredAt20()
    await changeSettings({ address: '14 Wrenfield Street, Bath BA1 1AA' })
    // £1,850.00: VAT 1850 / 6 = 308.333… → £308.33, £1,541.67 before VAT; deposit 30 % = £555.00, whose VAT is 555 / 6 = £92.50.
    const q = await send(await quote('Sapphire halo ring', 185000))
    const orderId = await accept((await sales.get(`/api/quotes/${q.id}`)).body)
    await cash(orderId, 'deposit', 55500)
    const [receipt] = await mails('payment-receipt', (m) => m.orderId === orderId)
    expect(receipt).toContain('of which VAT at 20%: £92.50 (£462.50 before VAT)')
    expect(receipt!.at(-1)).toBe(`VAT registration no. ${NUMBER}`)
    const weekBefore = (await owner.get('/api/payments/summary')).body.vat

    await settingsChangeLater()
    expect(await settings()).toMatchObject({ vatRegistered: false, vatRatePct: 5 })

    const pdf = await pdfText(q.id)
    expect(pdf).toContain('of which VAT at 20%: £308.33 (£1,541.67 before VAT)')
    expect(pdf).toContain(`VAT registration no. ${NUMBER}`)
    expect((await sales.get(`/api/quotes/${q.id}`)).body.vat).toEqual({ ratePct: 20, vatNumber: NUMBER, vatMinor: 30833, netMinor: 154167 })
    const m = await money(orderId)
    expect(m.vat).toEqual({ ratePct: 20, vatNumber: NUMBER, vatMinor: 30833, netMinor: 154167 })
    expect(m.payments.map((p: { amountMinor: number; vat: unknown }) => [p.amountMinor, p.vat])).toEqual([
      [55500, { ratePct: 20, vatNumber: NUMBER, vatMinor: 9250 }],
    ])
    // The Money page and the accountant's file still count the £92.50 taken at 20 %, under the number it was taken under.
    const weekAfter = (await owner.get('/api/payments/summary')).body.vat
    expect(weekAfter).toMatchObject({ thisWeekMinor: weekBefore.thisWeekMinor, ratesPct: [20], vatNumbers: [NUMBER] })
    expect((await csvRow((c) => c.includes('cash') && c.includes('555.00')))?.vat).toBe('92.50')
    // The receipt kept for it reads as it was sent.
    expect((await mails('payment-receipt', (x) => x.orderId === orderId))[0]).toEqual(receipt)

    // Money that comes in now is taken without VAT (the workshop is no longer registered): its receipt says none, the old one
    // and the price keep theirs. £1,850.00 − £555.00 = £1,295.00.
    await cash(orderId, 'balance', 129500)
    const [, balance] = await mails('payment-receipt', (x) => x.orderId === orderId)
    expect(balance!.some((l) => l.startsWith('Received: £1,295.00 (cash) on '))).toBe(true)
    expect(balance!.join('\n')).not.toMatch(/VAT/)
    const after = await money(orderId)
    expect(after.vat).toMatchObject({ ratePct: 20, vatMinor: 30833 })
    expect(after.payments.map((p: { vat: unknown }) => p.vat)).toEqual([{ ratePct: 20, vatNumber: NUMBER, vatMinor: 9250 }, null])
  })

  it('when a draft was written at 20 % and the rate is 5 % when it is sent, then it goes out at 5 % and keeps 5 % after the workshop leaves VAT', async () => {
    await registeredAt20()
    const draft = await quote('Emerald pendant', 10500)
    await changeSettings({ vatRatePct: 5 })
    // £105.00 at 5 %: 105 × 5 / 105 = £5.00 exactly, £100.00 before VAT.
    const q = await send(draft)
    const [mail] = await mails('quote', (m) => m.subject.includes(q.number))
    expect(mail).toContain('of which VAT at 5%: £5.00 (£100.00 before VAT)')
    await changeSettings({ vatRegistered: false })
    expect(await pdfText(q.id)).toContain('of which VAT at 5%: £5.00 (£100.00 before VAT)')
    // A quote written now has no VAT.
    const plain = await quote('Plain band', 10500)
    expect((await sales.get(`/api/quotes/${plain.id}`)).body.vat).toBeNull()
  })
})

describe('deposit and balance add up to the VAT of the price', () => {
  it('when £100.00 is paid as £50.00 and £50.00 at 20 %, then the receipts say £8.33 and £8.34, together the price’s £16.67; a refund takes back £8.34', async () => {
    await registeredAt20()
    // 100 / 6 = 16.666… → £16.67 in the price; 50 / 6 = 8.333… → £8.33 on the deposit; the balance carries £16.67 − £8.33.
    const orderId = await accept(await send(await quote('Silver stacking ring', 10000, 5000)))
    await cash(orderId, 'deposit', 5000)
    const balance = await cash(orderId, 'balance', 5000)
    const [deposit, settled] = await mails('payment-receipt', (m) => m.orderId === orderId)
    expect(deposit).toContain('of which VAT at 20%: £8.33 (£41.67 before VAT)')
    expect(settled).toContain('of which VAT at 20%: £8.34 (£41.66 before VAT)')
    const m = await money(orderId)
    expect(m.vat.vatMinor).toBe(1667)
    expect(m.payments.map((p: { vat: { vatMinor: number } }) => p.vat.vatMinor)).toEqual([833, 834])

    const weekBefore = (await owner.get('/api/payments/summary')).body.vat.thisWeekMinor
    const r = await owner.post(`/api/payments/${balance.id}/refund`, { note: 'changed their mind' })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.vat).toEqual({ ratePct: 20, vatNumber: NUMBER, vatMinor: -834 })
    const [, , refund] = await mails('payment-receipt', (x) => x.orderId === orderId)
    expect(refund).toContain('of which VAT at 20%: £8.34 (£41.66 before VAT)')
    expect((await owner.get('/api/payments/summary')).body.vat.thisWeekMinor).toBe(weekBefore - 834)
    expect((await csvRow((c) => c.includes('refund') && c.includes('-50.00') && c.includes('changed their mind')))?.vat).toBe('-8.34')
  })
})

describe('the accountant’s file', () => {
  it('when an order is paid at 20 %, at 17.5 % and without VAT, then each row gives the rate it was taken at and the VAT in it', async () => {
    await registeredAt20()
    // £287.75 = £120.00 + £117.50 + £50.25; the order's deposit asked is £120.00.
    const orderId = await accept(await send(await quote('Garnet cluster ring', 28775, 12000)))
    const { number } = (await sales.get(`/api/orders/${orderId}`)).body
    // £120.00 at 20 %: 120 × 20 / 120 = £20.00.
    await cash(orderId, 'deposit', 12000)
    await changeSettings({ vatRatePct: 17.5 })
    // £117.50 at 17.5 %: 117.50 × 17.5 / 117.5 = £17.50 (it leaves £50.25 owed, so it carries its own amount's VAT).
    await cash(orderId, 'balance', 11750)
    await changeSettings({ vatRegistered: false })
    // £50.25 taken without VAT: no rate, no VAT.
    await cash(orderId, 'balance', 5025)
    const lines = (await owner.get('/api/payments/export.csv')).text.trim().split('\r\n')
    const header = lines[0]!.split(',')
    expect(header.slice(-2)).toEqual(['vat_rate', 'vat'])
    const rows = lines
      .slice(1)
      .map((l) => Object.fromEntries(l.split(',').map((c, i) => [header[i], c])))
      .filter((r) => r.order === number)
    expect(rows.map((r) => [r.amount, r.vat_rate, r.vat])).toEqual([
      ['120.00', '20', '20.00'],
      ['117.50', '17.5', '17.50'],
      ['50.25', '', '0.00'],
    ])
  })
})

describe('the balance reminder', () => {
  it(
    'when a piece is ready with £50.00 of £100.00 owed, then the reminder says £8.34 VAT in it at 20 %, though the settings changed since',
    { timeout: 60_000 },
    async () => {
      await registeredAt20()
      const orderId = await accept(await send(await quote('Gold signet ring', 10000, 5000)))
      await cash(orderId, 'deposit', 5000)
      const { number } = (await sales.get(`/api/orders/${orderId}`)).body
      await t.db.update(s.orders).set({ status: 'ready' }).where(eq(s.orders.id, orderId))
      await settingsChangeLater()

      await sendMoneyReminders(t.deps, await firstWorkshopId(t.db))
      // The demo's own pieces waiting for collection get their reminders too, sent one after another before this one.
      const mail = await smtp.waitFor((x) => x.subject.includes(`order ${number} is ready`) && /balance to pay/.test(x.subject), 30_000)
      const lines = mail.text.trim().split(/\r?\n/)
      // The balance would carry the rest of the price's VAT: £16.67 − £8.33 = £8.34, £41.66 before VAT.
      const at = lines.indexOf('Balance to pay: £50.00')
      expect(at, mail.text).toBeGreaterThan(0)
      expect(lines[at + 1]).toBe('of which VAT at 20%: £8.34 (£41.66 before VAT)')
      expect(lines.at(-1)).toBe(`VAT registration no. ${NUMBER}`)
    },
  )
})

describe('the quote reminder', () => {
  it(
    'when a quote of £1,200.00 issued at 20 % is about to lapse, then its reminder says £200.00 of it is VAT, though the settings changed since; one issued unregistered says none',
    { timeout: 60_000 },
    async () => {
      const workshopId = await firstWorkshopId(t.db)
      const [w] = await t.db.select({ timeZone: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, workshopId))
      // Two days on, on the workshop's clock (Intl, not the server's date code): within the three days a reminder looks ahead.
      const validUntil = new Intl.DateTimeFormat('en-CA', { timeZone: w!.timeZone }).format(new Date(Date.now() + 2 * 86_400_000))
      const lapsingQuote = async (title: string, priceMinor: number) => {
        const q = await sales.post('/api/quotes', { customerId, title, priceMinor, currency: 'GBP', validUntil })
        expect(q.status, JSON.stringify(q.body)).toBe(201)
        return send(q.body)
      }
      await registeredAt20()
      const registered = await lapsingQuote('Diamond solitaire', 120_000)
      await settingsChangeLater()
      const unregistered = await lapsingQuote('Silver bangle', 60_000)
      // Registered again now: the unregistered quote's reminder still says no VAT.
      await registeredAt20()

      await sendMoneyReminders(t.deps, workshopId)
      const reminder = async (number: string) => (await smtp.waitFor((x) => x.subject.endsWith(`quote ${number} ends soon`), 30_000)).text.trim().split(/\r?\n/)
      // £1,200.00 × 20 ÷ 120 = £200.00 of VAT, £1,000.00 before VAT (hand-worked), at the rate and number it was issued with.
      const lines = await reminder(registered.number)
      const at = lines.indexOf('Price: £1,200.00')
      expect(at, lines.join('\n')).toBeGreaterThan(0)
      expect(lines[at + 1]).toBe('of which VAT at 20%: £200.00 (£1,000.00 before VAT)')
      expect(lines.at(-1)).toBe(`VAT registration no. ${NUMBER}`)
      const plain = await reminder(unregistered.number)
      expect(plain).toContain('Price: £600.00')
      expect(plain.filter((l) => /VAT/.test(l))).toEqual([])
    },
  )
})

describe('the VAT number', () => {
  it('when a registered workshop gives a number without a UK number’s shape, then 400 under the field and nothing changes', async () => {
    await registeredAt20()
    const before = await settings()
    for (const n of ['GB 123 4567', 'GB 123 4567 89 0', 'FR 123 4567 89', '1234567890'])
      expectFieldError(await putSettings({ vatNumber: n }), 'vatNumber', SHAPE)
    expect(await settings()).toMatchObject({ vatNumber: NUMBER, version: before.version })
    // 12 digits (with a branch) are taken, kept as typed.
    await changeSettings({ vatNumber: '123 4567 89 001' })
    expect((await settings()).vatNumber).toBe('123 4567 89 001')
  })

  it('when the workshop is not registered, then its number is not checked; registering it later checks the stored one', async () => {
    await changeSettings({ vatRegistered: false, vatNumber: 'PENDING' })
    expect((await settings()).vatNumber).toBe('PENDING')
    const { id: _id, publicUrlSuggestion: _s, vatNumber: _n, ...rest } = await settings()
    expectFieldError(await owner.put('/api/workshop', { ...rest, vatRegistered: true }), 'vatNumber', SHAPE)
    await registeredAt20()
  })

  it('when a registered workshop’s stored number has a bad shape, then its other settings still save, and another bad number or a new rate is refused under the field', async () => {
    await registeredAt20()
    // Kept before numbers were checked: 8 digits.
    await t.db
      .update(s.workshops)
      .set({ vatNumber: 'GB 123 4567 8' })
      .where(eq(s.workshops.id, await firstWorkshopId(t.db)))
    // The settings page sends every detail, the number as stored among them.
    const address = await putSettings({ address: '22 Wrenfield Street, Bath BA1 1AA' })
    expect(address.status, JSON.stringify(address.body)).toBe(200)
    expect(address.body).toMatchObject({ address: '22 Wrenfield Street, Bath BA1 1AA', vatRegistered: true, vatNumber: 'GB 123 4567 8', vatRatePct: 20 })
    // The quote and deposit rules (and the calendar's hours) leave the VAT details out.
    const { name, timeZone, weekPattern, planningLoad, version } = await settings()
    const rules = await owner.put('/api/workshop', { name, timeZone, weekPattern, planningLoad, version, depositPct: 40 })
    expect(rules.status, JSON.stringify(rules.body)).toBe(200)
    expect(rules.body).toMatchObject({ depositPct: 40, vatNumber: 'GB 123 4567 8' })

    const before = await settings()
    // A health authority's number runs from 500, a government department's to 499.
    expectFieldError(await putSettings({ vatNumber: 'GBGD 500' }), 'vatNumber', SHAPE)
    expectFieldError(await putSettings({ vatRatePct: 5 }), 'vatNumber', SHAPE)
    expect(await settings()).toMatchObject({ vatNumber: 'GB 123 4567 8', vatRatePct: 20, version: before.version })
    await changeSettings({ vatNumber: 'GBHA 599', vatRatePct: 5 })
    expect(await settings()).toMatchObject({ vatNumber: 'GBHA 599', vatRatePct: 5 })
    await changeSettings({ depositPct: 30 })
  })
})
