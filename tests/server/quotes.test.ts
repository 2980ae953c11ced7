// Quotes: the price above zero, the state rules (drafted → sent → accepted, withdrawn or expired), the e-mail's wording, the
// order made from an accepted or paid quote booked into the live plan, and the daily money reminders sent by the timer.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { PDFParse } from 'pdf-parse'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPayFake, TEST_CARDS, type PayFake } from '../../server/dev/pay-fake'
import { startDigestTimer } from '../../server/mail/digest-timer'
import { createMailer } from '../../server/mail/transport'
import { loadConfig } from '../../server/config'
import { dayjs } from '../../server/lib/time'
import { and, asc, count as countRows, eq, inArray, isNotNull, notInArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { addPerson, firstCustomerId, firstWorkshopId, planStep, stepIdsByKey } from '../setup/fixtures'
import { auditRows, expectFieldError } from './helpers'
import { takeOrder } from '../../server/services/orders'
import { bookQuoteOrder, quoteOrderInput, quoteRoom } from '../../server/services/quote-order'

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
      promisedDate: '2031-03-14',
      validUntil: '2031-03-07',
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
    expect(lines).toContain('Ready by: Friday 14 March 2031')
    expect(lines).toContain('This quote stands until Friday 7 March 2031.')
    expect(text).not.toMatch(/asking us to make/)
    // It ends with who to write back to, as the quote's PDF does: the demo workshop's settings (seed.ts).
    expect(lines.slice(-4)).toEqual([
      '— Wrenfield Street Workshop',
      '14 Wrenfield Street, Bristol BS1 4QX',
      'Telephone 0117 496 0321',
      'E-mail orders@wrenfield.test',
    ])
  })
})

/** A workshop day `days` from today on the seeded workshop's clock, written by Intl rather than the server's code. */
const dayFromToday = (days: number) => new Intl.DateTimeFormat('en-CA', { timeZone: tz }).format(new Date(Date.now() + days * 86_400_000))

describe('quote dates', () => {
  it('when a quote promises a day gone, stands until a day gone or stands past its promised date, then 400 naming the field and nothing is kept', async () => {
    const before = await stored()
    const r1 = await sales.post('/api/quotes', { customerId, title: 'Signet ring', priceMinor: 125000, promisedDate: dayFromToday(-1) })
    expectFieldError(r1, 'promisedDate', /today or later/)
    const r2 = await sales.post('/api/quotes', { customerId, title: 'Signet ring', priceMinor: 125000, validUntil: dayFromToday(-1) })
    expectFieldError(r2, 'validUntil', /today or later \(the quote would lapse at once\)/)
    const r3 = await sales.post('/api/quotes', {
      customerId,
      title: 'Signet ring',
      priceMinor: 125000,
      promisedDate: dayFromToday(10),
      validUntil: dayFromToday(11),
    })
    expectFieldError(r3, 'validUntil', /must not be after the promised date/)
    expect(await stored()).toEqual(before)
    // Promised and standing until today, or standing until the promised day itself, will do.
    expect((await drafted({ promisedDate: dayFromToday(0), validUntil: dayFromToday(0) })).validUntil).toBe(dayFromToday(0))
    expect((await drafted({ promisedDate: dayFromToday(10), validUntil: dayFromToday(10) })).validUntil).toBe(dayFromToday(10))
  })

  it('when a quote names no valid-until day, then it stands the workshop’s 30 days, or until its promised date when that comes first', async () => {
    // The seeded workshop keeps quotes 30 days (the column's default).
    expect((await drafted({ promisedDate: dayFromToday(12) })).validUntil).toBe(dayFromToday(12))
    expect((await drafted({ promisedDate: dayFromToday(90) })).validUntil).toBe(dayFromToday(30))
    expect((await drafted()).validUntil).toBe(dayFromToday(30))
  })

  it('when a draft’s dates are changed into the past or past its promise, then 400 naming the field; a draft kept with a day gone is not sent', async () => {
    const q = await drafted({ promisedDate: dayFromToday(20), validUntil: dayFromToday(15) })
    expectFieldError(await sales.patch(`/api/quotes/${q.id}`, { promisedDate: dayFromToday(-3), version: q.version }), 'promisedDate', /today or later/)
    expectFieldError(await sales.patch(`/api/quotes/${q.id}`, { promisedDate: dayFromToday(10), version: q.version }), 'validUntil', /after the promised date/)
    const ok = await sales.patch(`/api/quotes/${q.id}`, { promisedDate: dayFromToday(10), validUntil: dayFromToday(8), version: q.version })
    expect(ok.status, JSON.stringify(ok.body)).toBe(200)
    // A draft kept before the dates were checked, promising a day gone.
    await t.db
      .update(s.quotes)
      .set({ promisedDate: dayFromToday(-1) })
      .where(eq(s.quotes.id, q.id))
    const before = await stored()
    expectFieldError(await sales.post(`/api/quotes/${q.id}/send`, { version: ok.body.version }), 'promisedDate', /today or later/)
    expect(await stored()).toEqual(before)
  })

  it('when a sent quote kept from before still promises a day gone, then the office cannot accept it and is told why', async () => {
    const q = await send(await drafted({ promisedDate: dayFromToday(5) }))
    await t.db
      .update(s.quotes)
      .set({ promisedDate: dayFromToday(-2) })
      .where(eq(s.quotes.id, q.id))
    const r = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
    expect(r.status).toBe(409)
    expect(r.body.error).toMatch(new RegExp(`^Quote ${q.number} promised .+, a day gone: withdraw it and write a new quote`))
    expect((await sales.get(`/api/quotes/${q.id}`)).body).toMatchObject({ status: 'sent', orderId: null })
  })

  it('when a quote has lapsed, then the office cannot accept it, a new payment link is refused and its open link is closed', async () => {
    const q = await send(await drafted({ title: 'Bangle that lapsed' }))
    await t.db
      .update(s.quotes)
      .set({ validUntil: dayFromToday(-1) })
      .where(eq(s.quotes.id, q.id))
    const link = await sales.post(`/api/quotes/${q.id}/payment-links`, {})
    expect(link.status).toBe(409)
    expect(link.body.error).toBe('An expired quote cannot be paid: it lapsed at the end of its valid-until day; write a new quote')
    const r = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
    expect(r.status).toBe(409)
    expect(r.body.error).toBe('An expired quote cannot be accepted: it lapsed at the end of its valid-until day; write a new quote')
    const after = (await sales.get(`/api/quotes/${q.id}`)).body
    expect(after).toMatchObject({ status: 'expired', orderId: null })
    expect(after.links.map((l: { status: string }) => l.status)).toEqual(['expired'])
  })

  it('when a lapsed quote’s deposit is paid by card before the day’s run has marked it, then no order is made and the money is kept to refund', async () => {
    const q = await send(await drafted({ title: 'Brooch paid too late' }))
    await t.db
      .update(s.quotes)
      .set({ validUntil: dayFromToday(-1) })
      .where(eq(s.quotes.id, q.id))
    const orders = (await t.db.select({ n: countRows() }).from(s.orders))[0]!.n
    const paid = await fake.pay(q.links[0].url.split('/pay/')[1]!, TEST_CARDS.paid)
    expect(paid.delivery?.status, paid.delivery?.body).toBe(200)
    const after = (await sales.get(`/api/quotes/${q.id}`)).body
    expect(after.status).not.toBe('accepted')
    expect(after.orderId).toBeNull()
    expect(after.payments).toMatchObject([{ toRefund: true, note: 'paid after the quote lapsed', orderId: null }])
    expect((await t.db.select({ n: countRows() }).from(s.orders))[0]!.n).toBe(orders)
  })
})

/** The quote's PDF as text, white space run together. */
async function pdfText(quoteId: number): Promise<string> {
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
/** The first routing of a kind in the demo workshop. */
const routingOfKind = async (kind: 'piece' | 'repair') =>
  (await t.db.select({ id: s.routings.id }).from(s.routings).where(eq(s.routings.kind, kind)).orderBy(asc(s.routings.id)).limit(1))[0]!.id

describe('quote states', () => {
  it('when the quote is printed, then its metal is named as the customer reads it and its stones as count × what', async () => {
    const q = await drafted({
      title: 'Pavé band',
      details: { metal: 'gold-18ct', stones: [{ description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25, costEachMinor: 4_567 }] },
    })
    // The stones' cost is kept with the quote for its estimate, and never printed for the customer.
    expect(q.details.stones).toEqual([{ description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25, costEachMinor: 4_567 }])
    const text = await pdfText(q.id)
    expect(text).toContain('Metal: 18 ct gold')
    expect(text).not.toContain('gold-18ct')
    expect(text).toContain('Stones: 18 × round diamonds of 1.5 mm, 0.25 ct')
    expect(text).not.toContain('45.67')
  })

  it('when stone rows give their carats in all or stone by stone, then the PDF says which, and one stone’s carats are added up for the row', async () => {
    const q = await drafted({
      title: 'Sapphire cluster ring',
      details: {
        metal: 'platinum-950',
        stones: [
          { description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25 },
          { description: 'round diamonds of 2.5 mm', count: 3, caratEach: 0.06 },
          { description: 'round diamonds of 1 mm', count: 30, caratEach: 0.005 },
          { description: 'oval sapphire', count: 1, caratEach: 1.2 },
        ],
      },
    })
    const text = await pdfText(q.id)
    // 18 stones weighing 0.25 ct together: said in all, never as if each weighed 0.25 ct.
    expect(text).toContain('Stones: 18 × round diamonds of 1.5 mm, 0.25 ct in all Stones:')
    // Hand-worked: 3 × 0.06 ct = 0.18 ct; 30 × 0.005 ct = 0.150 ct; one stone weighs what the row weighs.
    expect(text).toContain('Stones: 3 × round diamonds of 2.5 mm, 0.06 ct each (0.18 ct in all)')
    expect(text).toContain('Stones: 30 × round diamonds of 1 mm, 0.005 ct each (0.15 ct in all)')
    expect(text).toContain('Stones: 1 × oval sapphire, 1.2 ct')
    expect(text).not.toMatch(/1\.2 ct (each|in all)/)
    // A row gives its weight one way: both at once is refused under the field.
    expectFieldError(
      await sales.post('/api/quotes', {
        customerId,
        title: 'Cluster ring',
        priceMinor: 90_000,
        currency: 'GBP',
        details: { stones: [{ description: 'round diamonds', count: 2, carats: 0.5, caratEach: 0.25 }] },
      }),
      'details.stones.0.caratEach',
      /not both/,
    )
  })

  it('when the quoted piece’s metal weight was estimated, then the PDF says about how much metal is in it', async () => {
    const routingId = await routingOfKind('piece')
    const one = await drafted({ title: 'Signet ring', details: { routingId, metal: 'gold-18ct', params: { metalWeightG: 6.2 } } })
    expect(await pdfText(one.id)).toContain('Metal: 18 ct gold, about 6.2 g')
    // A run of four cufflinks: the weight is of one piece.
    const run = await drafted({ title: 'Cufflinks', details: { routingId, metal: 'silver-925', params: { metalWeightG: 12.25, quantity: 4 } } })
    expect(await pdfText(run.id)).toContain('Metal: Sterling silver 925, about 12.25 g each')
    // No weight estimated: the metal alone, as before.
    const bare = await drafted({ title: 'Brooch', details: { routingId, metal: 'gold-9ct', params: {} } })
    const text = await pdfText(bare.id)
    expect(text).toContain('Metal: 9 ct gold')
    expect(text).not.toMatch(/about [\d.]+ g/)
  })

  it('when a repair is quoted with the metal it adds, then the PDF says that metal is added to the customer’s piece', async () => {
    const q = await drafted({ title: 'Claw retip', details: { routingId: await routingOfKind('repair'), metal: 'gold-18ct', params: { metalWeightG: 0.4 } } })
    expect(await pdfText(q.id)).toContain('Metal: 18 ct gold, about 0.4 g added to your piece')
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

/**
 * A corner of the workshop of its own, so the room a quoted piece finds can be worked out by hand: a new kind of work
 * ("engraving", tagged), one bench equipped for it and one engraver who alone does it, working Wednesdays 09:00–12:00 (inside
 * the workshop's 08:30–12:30) and on leave from today until the day before Wednesday `day`, the first Wednesday at least ten
 * days ahead that is not a closure. Its routing: engrave, 60 minutes, then polish the engraving, 15 minutes. Another order of
 * that routing is on the live plan there first: its engrave 09:00–10:00 and its polish 10:00–10:15.
 */
async function engravingCorner(tag: string, o: { forging?: boolean } = {}) {
  const workshopId = await firstWorkshopId(t.db)
  const kind = await manager.post('/api/operation-kinds', { code: `engraving-${tag}`, name: `Engraving ${tag}` })
  expect(kind.status, JSON.stringify(kind.body)).toBe(201)
  const [forging] = await t.db
    .select({ id: s.operationKinds.id })
    .from(s.operationKinds)
    .where(and(eq(s.operationKinds.workshopId, workshopId), eq(s.operationKinds.code, 'forging')))
  const steps = [
    ...(o.forging ? [{ key: 'forge', kindId: forging!.id, name: 'Forge the blank', baseMinutes: 30 }] : []),
    { key: 'engrave', kindId: kind.body.id, name: 'Engrave', baseMinutes: 60, ...(o.forging ? { after: ['forge'] } : {}) },
    { key: 'polish', kindId: kind.body.id, name: 'Polish the engraving', baseMinutes: 15, after: ['engrave'] },
  ]
  const routing = await manager.post('/api/routings', { code: `engraved-${tag}`, name: `Engraved plate ${tag}`, steps })
  expect(routing.status, JSON.stringify(routing.body)).toBe(201)
  const [bench] = await t.db
    .insert(s.benches)
    .values({ workshopId, name: `Engraving bench ${tag}`, kind: 'engraving' })
    .returning({ id: s.benches.id })
  await t.db.insert(s.benchCapabilities).values({ benchId: bench!.id, kindId: kind.body.id })
  const personId = await addPerson(t.db, { workshopId, name: `Engraver ${tag}`, skills: { codes: [`engraving-${tag}`], level: 3 } })
  await t.db
    .update(s.people)
    .set({ weekPattern: [{ weekday: 3, start: '09:00', end: '12:00' }] })
    .where(eq(s.people.id, personId))
  const today = dayjs().tz(tz).format('YYYY-MM-DD')
  const closed = await t.db.select().from(s.closures).where(eq(s.closures.workshopId, workshopId))
  // Wednesday of the week after next: the Monday of this ISO week + 16 days (10 to 16 days from today).
  let day = dayjs.tz(today, tz).startOf('isoWeek').add(16, 'day').format('YYYY-MM-DD')
  while (closed.some((c) => c.startsOn <= day && day <= c.endsOn)) day = dayjs(day).add(7, 'day').format('YYYY-MM-DD')
  await t.db.insert(s.leave).values({ personId, startsOn: today, endsOn: dayjs(day).subtract(1, 'day').format('YYYY-MM-DD') })
  const at = (hhmm: string) => dayjs.tz(`${day} ${hhmm}`, tz).toISOString()
  const other = await sales.post('/api/orders', {
    customerId,
    title: `Engraved plate already planned ${tag}`,
    dueDate: dayjs(day).add(7, 'day').format('YYYY-MM-DD'),
    pieces: [{ routingId: routing.body.id, piece: 'Plate' }],
  })
  expect(other.status, JSON.stringify(other.body)).toBe(201)
  const otherSteps = await stepIdsByKey(t.db, { orderId: other.body.id })
  const where = { benchId: bench!.id, personId }
  await planStep(t.db, otherSteps.engrave!, { ...where, start: at('09:00'), end: at('10:00') })
  await planStep(t.db, otherSteps.polish!, { ...where, start: at('10:00'), end: at('10:15') })
  return { day, at, routingId: routing.body.id as number, ...where }
}

const o = s.operations
/** Every planned step of the workshop (to see that nobody else moved). */
const planned = async (except: number[] = []) =>
  t.db
    .select({ id: o.id, benchId: o.plannedBenchId, personId: o.plannedPersonId, start: o.plannedStart, end: o.plannedEnd })
    .from(o)
    .where(and(isNotNull(o.plannedStart), except.length ? notInArray(o.id, except) : undefined))
    .orderBy(asc(o.id))
/** The steps of an order as the plan holds them, by step key. */
const orderSteps = async (orderId: number) =>
  Object.fromEntries(
    (
      await t.db
        .select({ key: o.key, benchId: o.plannedBenchId, personId: o.plannedPersonId, start: o.plannedStart, end: o.plannedEnd })
        .from(o)
        .innerJoin(s.jobBags, eq(s.jobBags.id, o.jobBagId))
        .where(eq(s.jobBags.orderId, orderId))
    ).map(({ key, ...x }) => [key, { ...x, start: x.start && new Date(x.start).toISOString(), end: x.end && new Date(x.end).toISOString() }]),
  )
/** The order list says the order is not in the plan, and its forecast (the order's drawer) says why it was not booked. */
async function expectOffPlanSaying(orderId: number, why: string) {
  const { number } = (await sales.get(`/api/orders/${orderId}`)).body
  const list = await sales.get(`/api/orders?q=${number}`)
  expect(list.status, JSON.stringify(list.body)).toBe(200)
  expect(list.body.items.find((x: { id: number }) => x.id === orderId)?.expected).toEqual({
    date: null,
    risk: null,
    margin: null,
    offPlan: 'all',
    done: false,
    cancelled: false,
  })
  const f = await sales.get(`/api/orders/${orderId}/forecast`)
  expect(f.status, JSON.stringify(f.body)).toBe(200)
  expect(f.body.notBooked).toEqual({ reason: why, at: expect.any(String) })
}
const quoted = (c: { routingId: number }, promisedDate: string, title: string) =>
  drafted({ title, promisedDate, details: { routingId: c.routingId, piece: 'Engraved plate', priority: 3 } })

describe('an order from a quote on the live plan', () => {
  it('when the office accepts a quote with a promised date, then its order is booked where the promise finds room now, nobody else moves, and the answer says so', async () => {
    const c = await engravingCorner('office')
    const before = await planned()
    const q = await send(await quoted(c, dayjs(c.day).add(2, 'day').format('YYYY-MM-DD'), 'Engraved plate for the office'))
    const r = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body).toMatchObject({ status: 'accepted', orderId: expect.any(Number) })
    // Hand-worked: the engraver is free on that Wednesday from 10:15 (the other plate's polish ends then): engrave 60 minutes,
    // 10:15–11:15, then the polish 15 minutes, 11:15–11:30, on the engraving bench.
    expect(await orderSteps(r.body.orderId)).toEqual({
      engrave: { benchId: c.benchId, personId: c.personId, start: c.at('10:15'), end: c.at('11:15') },
      polish: { benchId: c.benchId, personId: c.personId, start: c.at('11:15'), end: c.at('11:30') },
    })
    expect(r.body.booking).toEqual({ booked: true, start: c.at('10:15'), end: c.at('11:30'), startDate: c.day, endDate: c.day, steps: 2 })
    const mine = Object.values(await stepIdsByKey(t.db, { orderId: r.body.orderId }))
    expect(await planned(mine)).toEqual(before)
    expect((await auditRows(t, 'order', r.body.orderId)).map((x) => x.action)).toContain('book')
  })

  it('when the deposit of a quote with a promised date is paid by card, then its order is booked where the promise finds room now', async () => {
    const c = await engravingCorner('card')
    const q = await send(await quoted(c, dayjs(c.day).add(2, 'day').format('YYYY-MM-DD'), 'Engraved plate paid by card'))
    const paid = await fake.pay(q.links[0].url.split('/pay/')[1]!, TEST_CARDS.paid)
    expect(paid.delivery?.status, paid.delivery?.body).toBe(200)
    const after = (await sales.get(`/api/quotes/${q.id}`)).body
    expect(after).toMatchObject({ status: 'accepted', orderId: expect.any(Number), paidMinor: 37500 })
    // Hand-worked as above: 10:15–11:15 and 11:15–11:30 that Wednesday.
    expect(await orderSteps(after.orderId)).toEqual({
      engrave: { benchId: c.benchId, personId: c.personId, start: c.at('10:15'), end: c.at('11:15') },
      polish: { benchId: c.benchId, personId: c.personId, start: c.at('11:15'), end: c.at('11:30') },
    })
  })

  it('when the room found now ends after the quote’s promised date, then the order is made but not booked, and the answer and the audit say why', async () => {
    const c = await engravingCorner('late')
    // Promised for the Tuesday before the only room (that Wednesday).
    const q = await send(await quoted(c, dayjs(c.day).subtract(1, 'day').format('YYYY-MM-DD'), 'Engraved plate promised too soon'))
    const r = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.status).toBe('accepted')
    const why = `the room found now ends ${dayjs(c.day).format('ddd D MMM YYYY')}, after the promised date; the manager plans it at the next re-plan`
    expect(r.body.booking).toEqual({ booked: false, reason: why })
    expect(await orderSteps(r.body.orderId)).toEqual({
      engrave: { benchId: null, personId: null, start: null, end: null },
      polish: { benchId: null, personId: null, start: null, end: null },
    })
    expect((await auditRows(t, 'order', r.body.orderId)).find((x) => x.action === 'not-booked')?.details).toEqual({ reason: why })
    await expectOffPlanSaying(r.body.orderId, why)
  })

  it('when its deposit is paid by card but the room found now ends after the promised date, then the office sees the order off the plan and why', async () => {
    const c = await engravingCorner('card-late')
    const q = await send(await quoted(c, dayjs(c.day).subtract(1, 'day').format('YYYY-MM-DD'), 'Engraved plate paid too late'))
    const paid = await fake.pay(q.links[0].url.split('/pay/')[1]!, TEST_CARDS.paid)
    expect(paid.delivery?.status, paid.delivery?.body).toBe(200)
    const after = (await sales.get(`/api/quotes/${q.id}`)).body
    expect(after).toMatchObject({ status: 'accepted', orderId: expect.any(Number) })
    expect(Object.values(await orderSteps(after.orderId)).every((x) => x.start === null)).toBe(true)
    await expectOffPlanSaying(
      after.orderId,
      `the room found now ends ${dayjs(c.day).format('ddd D MMM YYYY')}, after the promised date; the manager plans it at the next re-plan`,
    )
  })

  it('when its room is taken between placing it and the order’s transaction, then the order is still made, nothing is booked, and the audit names the booking that took it', async () => {
    const c = await engravingCorner('clash')
    const q = await quoted(c, dayjs(c.day).add(2, 'day').format('YYYY-MM-DD'), 'Engraved plate that loses its room')
    const [row] = await t.db.select().from(s.quotes).where(eq(s.quotes.id, q.id))
    const actor = { userId: row!.createdBy!, workshopId: row!.workshopId, role: 'sales' as const, personId: null, name: 'sales' }
    const input = quoteOrderInput(row!)
    const room = await quoteRoom(t.deps, actor, input)
    // Meanwhile a third plate takes 10:15–11:15 with the engraver.
    const third = await sales.post('/api/orders', {
      customerId,
      title: 'Engraved plate booked meanwhile',
      dueDate: c.day,
      pieces: [{ routingId: c.routingId, piece: 'Plate' }],
    })
    const thirdEngrave = (await stepIdsByKey(t.db, { orderId: third.body.id })).engrave!
    await planStep(t.db, thirdEngrave, { benchId: c.benchId, personId: c.personId, start: c.at('10:15'), end: c.at('11:15') })
    const { order, extra } = await takeOrder(t.deps, actor, input, (tx, orderId) => bookQuoteOrder(tx, actor, orderId, room))
    expect(extra).toMatchObject({ booked: false, reason: expect.stringMatching(new RegExp(`taken meanwhile \\(${third.body.number}-1 "Engrave"`)) })
    expect(Object.values(await orderSteps(order.id)).every((x) => x.start === null)).toBe(true)
    expect((await auditRows(t, 'order', order.id)).find((x) => x.action === 'not-booked')?.details).toEqual({ reason: extra.booked ? null : extra.reason })
  })

  it('when metal work waits for the deposit and the office accepts the quote unpaid, then the order is made but not booked, saying it waits for the deposit', async () => {
    const workshopId = await firstWorkshopId(t.db)
    await t.db.update(s.workshops).set({ noMetalBeforeDeposit: true }).where(eq(s.workshops.id, workshopId))
    try {
      const c = await engravingCorner('held', { forging: true })
      const q = await send(await quoted(c, dayjs(c.day).add(30, 'day').format('YYYY-MM-DD'), 'Forged and engraved plate'))
      const r = await sales.post(`/api/quotes/${q.id}/accept`, { version: q.version })
      expect(r.status, JSON.stringify(r.body)).toBe(200)
      expect(r.body.booking).toEqual({ booked: false, reason: 'waiting for the deposit: the planner leaves it out until the deposit is in' })
      expect(Object.values(await orderSteps(r.body.orderId)).every((x) => x.start === null)).toBe(true)
    } finally {
      await t.db.update(s.workshops).set({ noMetalBeforeDeposit: false }).where(eq(s.workshops.id, workshopId))
    }
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
