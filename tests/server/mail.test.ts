// E-mail: the local test mailbox receives what we send, the ready-for-collection notice, the at-risk digest, and failures kept apart from the order.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createServer } from 'node:net'
import { format, parseISO } from 'date-fns'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { and, asc, desc, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { bookLastStepLate, firstCustomerId, routingId as firstRoutingId } from '../setup/fixtures'
import { expectFieldError } from './helpers'

let t: TestApp
let fake: FakeSmtp
let manager: Agent

async function openOrder(app: TestApp, offset = 0) {
  const [o] = await app.db
    .select({ id: s.orders.id, number: s.orders.number, version: s.orders.version, email: s.customers.email, name: s.customers.name })
    .from(s.orders)
    .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
    .where(eq(s.orders.status, 'open'))
    .orderBy(asc(s.orders.id))
    .offset(offset)
    .limit(1)
  return o!
}

beforeAll(async () => {
  fake = await startFakeSmtp()
  t = await createTestApp({ SMTP_URL: fake.url })
  fake.useDb(t.db)
  manager = await signedIn(t.app, 'manager')
})
afterAll(async () => {
  await t?.close()
  await fake?.close()
})

describe('mail', () => {
  it('when a promise is accepted, then the test mailbox receives it with recipient, subject and the promised date', async () => {
    const sales = await signedIn(t.app, 'sales')
    const c = (
      await t.db
        .select({ id: s.customers.id, email: s.customers.email })
        .from(s.customers)
        .where(eq(s.customers.workshopId, 1))
        .orderBy(desc(s.customers.id))
        .limit(1)
    )[0]!
    const r = await sales.post('/api/promise/accept', {
      customerId: c.id,
      title: 'Signet ring',
      routingId: await firstRoutingId(t.db),
      promisedDate: '2031-03-14',
      priority: 3,
      priceQuotedMinor: 30_000,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    const m = await fake.waitFor((x) => x.subject.includes(r.body.order.number))
    expect(m.to).toEqual([c.email])
    expect(m.subject).toContain('Wrenfield Street Workshop')
    // Reference: date-fns long date of 2031-03-14 (a Friday).
    expect(format(parseISO('2031-03-14'), 'EEEE d MMMM yyyy')).toBe('Friday 14 March 2031')
    expect(m.text).toContain('Friday 14 March 2031')
    expect(m.html).toContain('Friday 14 March 2031')
    expect(m.text).toContain(
      `Thank you for your order "Signet ring" (${r.body.order.number}). We promise to have it ready by Friday 14 March 2031 (2031-03-14).`,
    )
  })

  it('when the owner changes the workshop’s address, contact and currency, then the next confirmation carries them; bad values are refused on the field', async () => {
    const owner = await signedIn(t.app, 'owner')
    const w = (await owner.get('/api/workshop')).body
    expect(w).toMatchObject({ address: '14 Wrenfield Street, Bristol BS1 4QX', phone: '0117 496 0321', contactEmail: 'orders@wrenfield.test', currency: 'GBP' })
    expectFieldError(await owner.put('/api/workshop', { ...w, currency: 'POUNDS' }), 'currency', /three-letter currency code/)
    expectFieldError(await owner.put('/api/workshop', { ...w, contactEmail: 'not-an-address' }), 'contactEmail', /e-mail address/)
    expectFieldError(await owner.put('/api/workshop', { ...w, address: 'x'.repeat(301) }), 'address', /at most 300/)
    const u = await owner.put('/api/workshop', {
      ...w,
      address: '3 Vyse Street, Birmingham B18 6LT',
      phone: '0121 496 0777',
      contactEmail: 'atelier@wrenfield.test',
      currency: 'eur',
    })
    expect(u.status, JSON.stringify(u.body)).toBe(200)
    expect(u.body.currency).toBe('EUR')
    const sales = await signedIn(t.app, 'sales')
    const r = await sales.post('/api/promise/accept', {
      customerId: await firstCustomerId(t.db, 1),
      title: 'Euro ring',
      routingId: await firstRoutingId(t.db),
      promisedDate: '2031-03-14',
      priority: 3,
      priceQuotedMinor: 199_900,
    })
    const m = await fake.waitFor((x) => x.subject.includes(r.body.order.number))
    // 199,900 cents (EUR has 2 decimals, ISO 4217) = 1,999.00; Intl en-GB formats it as "€1,999.00" (ECMA-402 currency formatting).
    expect(m.text).toContain('€1,999.00')
    expect(m.text).toContain('3 Vyse Street, Birmingham B18 6LT')
    expect(m.text).toContain('0121 496 0777')
    expect(m.text).toContain('atelier@wrenfield.test')
    expect(m.html).toContain('3 Vyse Street, Birmingham B18 6LT')
    // A change that leaves the contact out (the calendar page saves only its own fields) keeps it.
    const again = await owner.put('/api/workshop', {
      name: u.body.name,
      timeZone: u.body.timeZone,
      weekPattern: u.body.weekPattern,
      planningLoad: u.body.planningLoad,
      version: u.body.version,
    })
    expect(again.body).toMatchObject({ address: '3 Vyse Street, Birmingham B18 6LT', currency: 'EUR' })
    await owner.put('/api/workshop', { ...w, version: again.body.version })
  })

  it('when an order becomes ready, then the customer gets a ready-for-collection notice once', async () => {
    const o = await openOrder(t)
    const r = await manager.patch(`/api/orders/${o.id}`, { status: 'ready', version: o.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const m = await fake.waitFor((x) => x.subject.includes(o.number) && /ready to collect/.test(x.subject))
    expect(m.to).toEqual([o.email])
    expect(m.text).toContain(o.name)
    // Saving again with status ready sends nothing more.
    const again = await manager.patch(`/api/orders/${o.id}`, { status: 'ready', version: r.body.version })
    expect(again.status).toBe(200)
    const rows = await t.db
      .select({ status: s.outbox.status })
      .from(s.outbox)
      .where(and(eq(s.outbox.orderId, o.id), eq(s.outbox.kind, 'ready-for-collection')))
    expect(rows).toHaveLength(1)
    expect(rows[0]!.status).toBe('delivered')
  })

  it('when a job bag on the live plan ends after its promised date, then the at-risk digest lists it to the managers', async () => {
    const o = await openOrder(t, 1)
    const bag = (await t.db.select({ id: s.jobBags.id, number: s.jobBags.number }).from(s.jobBags).where(eq(s.jobBags.orderId, o.id)))[0]!
    // Its last bench step booked three working days from now, the order promised two days before that step ends.
    await bookLastStepLate(t.db, {
      workshopId: 1,
      orderId: o.id,
      bagId: bag.id,
      fromMinute: 3 * 1440,
      promised: (end) => new Date(end.getTime() - 2 * 86_400_000).toISOString().slice(0, 10),
    })
    const r = await manager.post('/api/mail/at-risk-digest')
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.jobs.map((j: { number: string }) => j.number)).toContain(bag.number)
    expect(r.body.jobs.find((j: { number: string }) => j.number === bag.number).isNew).toBe(true)
    const m = await fake.waitFor((x) => x.to.includes('manager@wrenfield.test') && x.subject.includes('at risk'))
    expect(m.text).toContain(bag.number)
    expect(m.text).toContain('LATE')
    // The second digest no longer marks it new.
    const second = await manager.post('/api/mail/at-risk-digest')
    expect(second.body.jobs.find((j: { number: string }) => j.number === bag.number).isNew).toBe(false)
    const sales = await signedIn(t.app, 'sales')
    expect((await sales.post('/api/mail/at-risk-digest')).status).toBe(403)
  })

  it('when the outbox is listed, then sales sees the messages and one with its text', async () => {
    const sales = await signedIn(t.app, 'sales')
    const list = await sales.get('/api/outbox')
    expect(list.status).toBe(200)
    expect(list.body.items.length).toBeGreaterThanOrEqual(3)
    const one = await sales.get(`/api/outbox/${list.body.items[0].id}`)
    expect(one.status).toBe(200)
    expect(one.body.text.length).toBeGreaterThan(10)
    const bench = await signedIn(t.app, 'bench')
    expect((await bench.get('/api/outbox')).status).toBe(403)
  })
})

describe('mail failures', () => {
  it('when the mail server cannot be reached, then the order change still commits and the message stays queued with the error, to be tried again', async () => {
    // A port nobody listens on: taken and released again.
    const port = await new Promise<number>((resolve) => {
      const s = createServer().listen(0, '127.0.0.1', () => {
        const a = s.address() as { port: number }
        s.close(() => resolve(a.port))
      })
    })
    const broken = await createTestApp({ SMTP_URL: `smtp://127.0.0.1:${port}` })
    try {
      const m = await signedIn(broken.app, 'manager')
      const o = await openOrder(broken)
      const r = await m.patch(`/api/orders/${o.id}`, { status: 'ready', version: o.version })
      expect(r.status, JSON.stringify(r.body)).toBe(200)
      expect(r.body.status).toBe('ready')
      const [row] = await broken.db.select({ status: s.orders.status }).from(s.orders).where(eq(s.orders.id, o.id))
      expect(row!.status).toBe('ready')
      // The send job's first try fails; its error is written on the row, which waits for the next try.
      const tried = async () =>
        (
          await broken.db
            .select({ id: s.outbox.id, status: s.outbox.status, error: s.outbox.error, sentAt: s.outbox.sentAt })
            .from(s.outbox)
            .where(and(eq(s.outbox.orderId, o.id), eq(s.outbox.kind, 'ready-for-collection')))
        )[0]
      let mail = await tried()
      for (const t0 = Date.now(); !mail?.error && Date.now() - t0 < 20_000;) {
        await new Promise((r) => setTimeout(r, 100))
        mail = await tried()
      }
      expect(mail!.status).toBe('queued')
      expect(mail!.error).toMatch(/ECONNREFUSED|connect/i)
      expect(mail!.sentAt).toBeNull()
      // Raw SQL on purpose: pg-boss's own table, not part of our schema. The error is written while the job is still running, and
      // the queue marks it for retry just after the handler fails: wait for that, as a user would wait for the next try.
      const jobOf = async () =>
        (await broken.pool.query(`select state, retry_count from pgboss.job where name = 'mail-send' and data->>'outboxId' = $1`, [String(mail!.id)])).rows[0]
      let job = await jobOf()
      for (const t0 = Date.now(); job?.state === 'active' && Date.now() - t0 < 20_000;) {
        await new Promise((r) => setTimeout(r, 100))
        job = await jobOf()
      }
      expect(job).toMatchObject({ state: 'retry' })
    } finally {
      await broken.close()
    }
  })
})
