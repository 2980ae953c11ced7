// VAT on what the customer is told and pays: the workshop's VAT setting (validated, audited) and the VAT line on the quote's PDF
// and e-mail, the receipt, the order's money and the owner's figures. Prices are VAT-inclusive; 20 % is the UK standard rate as
// HMRC publishes it. Expected figures are worked by hand: £1,850.00 × 20/120 = £308.33, £99.99 × 20/120 = £16.665 → £16.67.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { PDFParse } from 'pdf-parse'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPayFake, type PayFake } from '../../server/dev/pay-fake'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId } from '../setup/fixtures'
import { auditRows, expectFieldError } from './helpers'

let t: TestApp, fake: PayFake, http: Server
let sales: Agent, owner: Agent, manager: Agent
let customerId: number

beforeAll(async () => {
  fake = await startPayFake()
  t = await createTestApp({ PAY_FAKE_URL: fake.url })
  http = createServer(t.app)
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', () => r()))
  fake.webhookUrl = `http://127.0.0.1:${(http.address() as AddressInfo).port}/api/payments/webhook`
  ;[sales, owner, manager] = await Promise.all([signedIn(t.app, 'sales'), signedIn(t.app, 'owner'), signedIn(t.app, 'manager')])
  customerId = await firstCustomerId(t.db)
})
afterAll(async () => {
  await new Promise((r) => http?.close(r))
  await fake?.close()
  await t?.close()
})

const settings = async () => (await owner.get('/api/workshop')).body
/** The settings as they are, with `change` on top: what the settings page sends. */
const putSettings = async (change: Record<string, unknown>) => {
  const w = await settings()
  const { id: _id, publicUrlSuggestion: _s, ...rest } = w
  return owner.put('/api/workshop', { ...rest, ...change })
}
const registerForVat = async () => {
  const r = await putSettings({ vatRegistered: true, vatNumber: 'GB 123 4567 89', vatRatePct: 20 })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
}

const sentQuote = async (title: string, priceMinor: number) => {
  const q = await sales.post('/api/quotes', { customerId, title, priceMinor, currency: 'GBP' })
  expect(q.status, JSON.stringify(q.body)).toBe(201)
  const sent = await sales.post(`/api/quotes/${q.body.id}/send`, { version: q.body.version })
  expect(sent.status, JSON.stringify(sent.body)).toBe(200)
  return sent.body as { id: number; number: string; version: number; depositMinor: number }
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
const mailLines = async (kind: string, match: (m: { subject: string; orderId: number | null }) => boolean) => {
  const items = (await manager.get(`/api/outbox?kind=${kind}&pageSize=100`)).body.items as { id: number; subject: string; orderId: number | null }[]
  const mine = items.filter(match)
  expect(mine).toHaveLength(1)
  return ((await manager.get(`/api/outbox/${mine[0]!.id}`)).body.text as string).split('\n')
}

describe('the VAT setting', () => {
  it('when the workshop is not registered, then quotes, their PDF and e-mail say nothing of VAT', async () => {
    expect(await settings()).toMatchObject({ vatRegistered: false, vatNumber: '', vatRatePct: 20 })
    const q = await sentQuote('Plain wedding band', 185000)
    expect((await sales.get(`/api/quotes/${q.id}`)).body.vat).toBeNull()
    expect(await pdfText(q.id)).not.toMatch(/VAT/)
    const lines = await mailLines('quote', (m) => m.subject.includes(q.number))
    expect(lines.join('\n')).not.toMatch(/VAT/)
  })

  it('when the VAT number, rate or registration is wrong, then 400 naming the field and the settings stay as they were', async () => {
    const before = await settings()
    expectFieldError(await putSettings({ vatRegistered: true, vatNumber: 'GB-123/4567' }), 'vatNumber', /letters, digits and spaces/)
    expectFieldError(await putSettings({ vatNumber: 'GB 1234 5678 9012 3456 7' }), 'vatNumber', /at most 20/)
    expectFieldError(await putSettings({ vatRatePct: 120 }), 'vatRatePct', /0 to 100/)
    expectFieldError(await putSettings({ vatRatePct: -5 }), 'vatRatePct', /0 to 100/)
    expectFieldError(await putSettings({ vatRatePct: 17.555 }), 'vatRatePct', /two decimals/)
    expectFieldError(await putSettings({ vatRatePct: '20' }), 'vatRatePct')
    expectFieldError(await putSettings({ vatRegistered: 'yes' }), 'vatRegistered')
    // Registered without a number: the documents could not carry it.
    expectFieldError(await putSettings({ vatRegistered: true, vatNumber: '' }), 'vatNumber', /required when the workshop is registered/)
    expect(await settings()).toMatchObject({ vatRegistered: false, vatNumber: '', vatRatePct: 20, version: before.version })
  })

  it('when the owner registers the workshop for VAT, then it is kept with a new version and an audit row; others may not change it', async () => {
    const before = await settings()
    const r = await putSettings({ vatRegistered: true, vatNumber: ' gb 123 4567 89 ', vatRatePct: 17.5 })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body).toMatchObject({ vatRegistered: true, vatNumber: 'GB 123 4567 89', vatRatePct: 17.5, version: before.version + 1 })
    expect((await auditRows(t, 'workshop', before.id))[0]).toMatchObject({
      action: 'update',
      details: expect.objectContaining({ vatRegistered: true, vatNumber: 'GB 123 4567 89', vatRatePct: 17.5 }),
    })
    const { id: _id, publicUrlSuggestion: _s, ...rest } = r.body
    expect((await manager.put('/api/workshop', { ...rest, vatRegistered: false })).status).toBe(403)
    await registerForVat()
    expect(await settings()).toMatchObject({ vatRegistered: true, vatRatePct: 20 })
  })
})

describe('VAT on what the customer gets', () => {
  it('when a £1,850.00 quote is printed, then it shows £308.33 VAT, £1,541.67 before VAT and the VAT number; the deposit is 30 % of £1,850.00', async () => {
    await registerForVat()
    const q = await sentQuote('Sapphire halo ring', 185000)
    expect((await sales.get(`/api/quotes/${q.id}`)).body.vat).toEqual({ ratePct: 20, vatNumber: 'GB 123 4567 89', vatMinor: 30833, netMinor: 154167 })
    const text = await pdfText(q.id)
    expect(text).toContain('VAT registration no. GB 123 4567 89')
    expect(text).toContain('Price: £1,850.00')
    expect(text).toContain('of which VAT at 20%: £308.33 (£1,541.67 before VAT)')
    // 30 % of £1,850.00 = £555.00 now, £1,295.00 at collection: on the price paid, VAT included.
    expect(text).toContain('Deposit to start the work: £555.00')
    expect(text).toContain('Balance at collection: £1,295.00')
  })

  it('when a £99.99 quote is e-mailed, then the VAT of £16.665 reads £16.67 (£83.32 before VAT) and the e-mail ends with the VAT number', async () => {
    await registerForVat()
    const q = await sentQuote('Silver chain repair', 9999)
    const lines = await mailLines('quote', (m) => m.subject.includes(q.number))
    const price = lines.indexOf('Price: £99.99')
    expect(price).toBeGreaterThan(0)
    expect(lines[price + 1]).toBe('of which VAT at 20%: £16.67 (£83.32 before VAT)')
    // 30 % of £99.99 = £29.997 → £30.00 now, £69.99 at collection.
    expect(lines[price + 2]).toBe('Deposit to start the work: £30.00')
    expect(lines[price + 3]).toBe('Balance at collection: £69.99')
    expect(lines.at(-1)).toBe('VAT registration no. GB 123 4567 89')
  })

  it('when £99.99 in cash pays a quoted order, then its receipt, the order’s money and this week’s VAT on the Money page each show £16.67', async () => {
    await registerForVat()
    const contact = await putSettings({ address: '14 Wrenfield Street, Bath BA1 1AA', phone: '01632 960 000', contactEmail: 'orders@wrenfield.example' })
    expect(contact.status, JSON.stringify(contact.body)).toBe(200)
    const q = await sentQuote('Signet re-engraving', 9999)
    const accepted = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(200)
    const orderId = accepted.body.orderId as number
    const weekBefore = (await owner.get('/api/payments/summary')).body
    expect(weekBefore.vat).toMatchObject({ ratesPct: [20], vatNumbers: ['GB 123 4567 89'] })
    const cash = await sales.post(`/api/orders/${orderId}/payments`, { method: 'cash', purpose: 'balance', amountMinor: 9999 })
    expect(cash.status, JSON.stringify(cash.body)).toBe(201)
    const receipt = await mailLines('payment-receipt', (m) => m.orderId === orderId)
    expect(receipt).toContain('of which VAT at 20%: £16.67 (£83.32 before VAT)')
    // Signed as the quote e-mail is: the workshop's name, address, telephone, e-mail, then its VAT number (it ended with the
    // name and the number only).
    const w = await settings()
    expect(receipt.slice(-5)).toEqual([
      `— ${w.name}`,
      '14 Wrenfield Street, Bath BA1 1AA',
      'Telephone 01632 960 000',
      'E-mail orders@wrenfield.example',
      'VAT registration no. GB 123 4567 89',
    ])
    const money = (await sales.get(`/api/orders/${orderId}/money`)).body
    expect(money).toMatchObject({ priceMinor: 9999, owedMinor: 0, vat: { ratePct: 20, vatNumber: 'GB 123 4567 89', vatMinor: 1667, netMinor: 8332 } })
    const weekAfter = (await owner.get('/api/payments/summary')).body
    expect(weekAfter.vat.thisWeekMinor - weekBefore.vat.thisWeekMinor).toBe(1667)
    const csv = (await owner.get('/api/payments/export.csv')).text.trim().split('\r\n')
    expect(csv[0]!.split(',').at(-1)).toBe('vat')
    expect(
      csv
        .find((l) => l.includes(',cash,balance,99.99,GBP,'))
        ?.split(',')
        .at(-1),
    ).toBe('16.67')
  })
})
