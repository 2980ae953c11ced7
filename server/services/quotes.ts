// Quotes: drafted → sent (e-mailed with a deposit link) → accepted (the order is made or linked), or expired / withdrawn; the PDF.
import { and, count, desc, eq, ilike, inArray, lt, or, sql } from 'drizzle-orm'
import PDFDocument from 'pdfkit'
import {
  defaultValidUntil,
  quoteDateProblems,
  quoteStoneWords,
  type QuoteInput,
  type QuoteStatus,
  type QuoteStone,
  type QuoteUpdate,
} from '../../shared/schemas/quote'
import type { Db, Trx } from '../db/client'
import * as s from '../db/schema/index'
import { AppError, invalid, notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs, formatDayWithYear } from '../lib/time'
import { balanceReminder, money, quoteOffer, quoteReminder } from '../mail/messages'
import { minorToMajor } from '../../shared/domain/currency'
import { storedVatTerms, vatFiguresOf, vatLine, vatNumberLine, vatTermsOf, type StoredVatTerms } from '../../shared/domain/vat'
import { metalName, type PieceParams } from '../../shared/schemas/order'
import { worksOnCustomersPiece } from '../../shared/domain/metal'
import { audit } from './audit'
import { sendRecorded } from './mail'
import { takeOrder } from './orders'
import { balanceWithVat, createLink, listPayments } from './payments'
import { bookQuoteOrder, quoteOrderInput, quoteRoom, quoteVatAtAcceptance } from './quote-order'
import type { Booking } from './promise'
import { lockLivePlan } from '../planning/live-plan'
import { LOCK } from '../lib/locks'

const cols = {
  id: s.quotes.id,
  number: s.quotes.number,
  customerId: s.quotes.customerId,
  customerName: s.customers.name,
  customerEmail: s.customers.email,
  orderId: s.quotes.orderId,
  orderNumber: s.orders.number,
  status: s.quotes.status,
  title: s.quotes.title,
  description: s.quotes.description,
  details: s.quotes.details,
  promisedDate: s.quotes.promisedDate,
  confidence: s.quotes.confidence,
  currency: s.quotes.currency,
  priceMinor: s.quotes.priceMinor,
  depositMinor: s.quotes.depositMinor,
  validUntil: s.quotes.validUntil,
  sentAt: s.quotes.sentAt,
  acceptedAt: s.quotes.acceptedAt,
  withdrawnAt: s.quotes.withdrawnAt,
  createdAt: s.quotes.createdAt,
  version: s.quotes.version,
}
const today = async (db: Db | Trx, workshopId: number, now = new Date()) => {
  const [w] = await db.select({ timeZone: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, workshopId))
  return dayjs(now)
    .tz(w?.timeZone ?? 'Europe/London')
    .format('YYYY-MM-DD')
}

/** 400 naming each date the quote may not carry today, with its reason (the rule the quote dialog checks too). */
function checkDates(q: { promisedDate: string | null; validUntil: string }, day: string) {
  const fields = quoteDateProblems(q, day) as Record<string, string>
  if (Object.keys(fields).length)
    throw new AppError({
      code: 'validation',
      message: Object.entries(fields)
        .map(([f, why]) => `${f}: ${why}`)
        .join('; '),
      fields,
    })
}

/**
 * Quotes (drafted or sent) past their validity lapse (run before reading and by the daily timer); their open deposit links
 * close with them, here and at the provider, so a lapsed quote cannot be paid.
 */
export async function expireQuotes(deps: Pick<Deps, 'db' | 'realtime'> & Partial<Pick<Deps, 'pay'>>, workshopId: number, now = new Date()) {
  const rows = await deps.db
    .update(s.quotes)
    .set({ status: 'expired', version: sql`${s.quotes.version} + 1` })
    .where(
      and(eq(s.quotes.workshopId, workshopId), inArray(s.quotes.status, ['drafted', 'sent']), lt(s.quotes.validUntil, await today(deps.db, workshopId, now))),
    )
    .returning()
  const links = rows.length
    ? await deps.db
        .update(s.paymentLinks)
        .set({ status: 'expired' })
        .where(
          and(
            inArray(
              s.paymentLinks.quoteId,
              rows.map((q) => q.id),
            ),
            eq(s.paymentLinks.status, 'open'),
          ),
        )
        .returning()
    : []
  for (const l of links) await deps.pay?.stripe.checkout.sessions.expire(l.providerId).catch(() => {})
  for (const q of rows) deps.realtime.emit(workshopId, 'quote:changed', { id: q.id, version: q.version, status: q.status })
  return rows.length
}

const withBalance = <T extends { priceMinor: number; depositMinor: number }>(q: T) => ({ ...q, balanceMinor: q.priceMinor - q.depositMinor })

export async function listQuotes(
  deps: Deps,
  workshopId: number,
  q: { q?: string; status?: QuoteStatus | QuoteStatus[]; orderId?: number; page: number; pageSize: number },
) {
  await expireQuotes(deps, workshopId)
  const statuses = q.status === undefined ? [] : Array.isArray(q.status) ? q.status : [q.status]
  const like = q.q ? `%${q.q.replace(/[\\%_]/g, '\\$&')}%` : null
  const where = and(
    eq(s.quotes.workshopId, workshopId),
    statuses.length ? inArray(s.quotes.status, statuses) : undefined,
    q.orderId ? eq(s.quotes.orderId, q.orderId) : undefined,
    like ? or(ilike(s.quotes.number, like), ilike(s.quotes.title, like), ilike(s.customers.name, like)) : undefined,
  )
  const [total] = await deps.db.select({ n: count() }).from(s.quotes).innerJoin(s.customers, eq(s.customers.id, s.quotes.customerId)).where(where)
  const items = await deps.db
    .select(cols)
    .from(s.quotes)
    .innerJoin(s.customers, eq(s.customers.id, s.quotes.customerId))
    .leftJoin(s.orders, eq(s.orders.id, s.quotes.orderId))
    .where(where)
    .orderBy(desc(s.quotes.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  return { items: items.map(withBalance), total: total?.n ?? 0, page: q.page, pageSize: q.pageSize }
}

export async function getQuote(db: Db, workshopId: number, id: number) {
  const [q] = await db
    .select(cols)
    .from(s.quotes)
    .innerJoin(s.customers, eq(s.customers.id, s.quotes.customerId))
    .leftJoin(s.orders, eq(s.orders.id, s.quotes.orderId))
    .where(and(eq(s.quotes.id, id), eq(s.quotes.workshopId, workshopId)))
  if (!q) throw notFound('Quote')
  const links = await db
    .select({
      id: s.paymentLinks.id,
      quoteId: s.paymentLinks.quoteId,
      orderId: s.paymentLinks.orderId,
      purpose: s.paymentLinks.purpose,
      currency: s.paymentLinks.currency,
      amountMinor: s.paymentLinks.amountMinor,
      url: s.paymentLinks.url,
      status: s.paymentLinks.status,
      createdAt: s.paymentLinks.createdAt,
    })
    .from(s.paymentLinks)
    .where(eq(s.paymentLinks.quoteId, id))
    .orderBy(s.paymentLinks.id)
  const payments = await listPayments(db, eq(s.payments.quoteId, id))
  return {
    ...withBalance(q),
    links,
    payments,
    paidMinor: payments.filter((p) => !p.toRefund).reduce((t, p) => t + p.amountMinor, 0),
    vat: vatFiguresOf(q.priceMinor, vatTermsOf(await quoteVatTerms(db, id))),
  }
}

/** The VAT terms frozen on a quote when it was written, or sent from a draft: what its PDF and e-mails say, whatever the settings are now. */
async function quoteVatTerms(db: Db | Trx, id: number): Promise<StoredVatTerms> {
  const [t] = await db
    .select({ vatRegistered: s.quotes.vatRegistered, vatNumber: s.quotes.vatNumber, vatRateBasisPoints: s.quotes.vatRateBasisPoints })
    .from(s.quotes)
    .where(eq(s.quotes.id, id))
  if (!t) throw notFound('Quote')
  return t
}

export async function createQuote(deps: Deps, actor: Actor, input: QuoteInput) {
  const [w] = await deps.db.select().from(s.workshops).where(eq(s.workshops.id, actor.workshopId))
  const id = await deps.db.transaction(async (tx) => {
    const [c] = await tx
      .select({ id: s.customers.id })
      .from(s.customers)
      .where(and(eq(s.customers.id, input.customerId), eq(s.customers.workshopId, actor.workshopId)))
    if (!c) throw invalid('customerId', 'is not a customer of this workshop')
    if (input.orderId) {
      const [o] = await tx
        .select({ customerId: s.orders.customerId })
        .from(s.orders)
        .where(and(eq(s.orders.id, input.orderId), eq(s.orders.workshopId, actor.workshopId)))
      if (!o) throw invalid('orderId', 'is not an order of this workshop')
      if (o.customerId !== input.customerId) throw invalid('orderId', 'belongs to another customer')
    }
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.quoteNumbers}, ${actor.workshopId})`)
    const [{ n } = { n: 0 }] = await tx.select({ n: count() }).from(s.quotes).where(eq(s.quotes.workshopId, actor.workshopId))
    const day = await today(tx, actor.workshopId)
    const number = `Q${day.slice(2, 4)}-${String(n + 1).padStart(4, '0')}`
    const depositMinor = input.depositMinor ?? Math.round((input.priceMinor * w!.depositPct) / 100)
    const validUntil = input.validUntil ?? defaultValidUntil(day, w!.quoteValidDays, input.promisedDate)
    checkDates({ promisedDate: input.promisedDate, validUntil }, day)
    const [q] = await tx
      .insert(s.quotes)
      .values({
        workshopId: actor.workshopId,
        number,
        customerId: input.customerId,
        orderId: input.orderId,
        title: input.title,
        description: input.description,
        details: input.details,
        promisedDate: input.promisedDate,
        confidence: input.confidence,
        currency: input.currency ?? w!.currency,
        priceMinor: input.priceMinor,
        depositMinor,
        ...storedVatTerms(w!),
        validUntil,
        createdBy: actor.userId,
      })
      .returning()
    await audit(tx, actor, 'create', 'quote', q!.id, { number, priceMinor: input.priceMinor, depositMinor })
    return q!
  })
  deps.realtime.emit(actor.workshopId, 'quote:changed', { id: id.id, version: id.version, status: id.status })
  return getQuote(deps.db, actor.workshopId, id.id)
}

/** A move the quote's state does not allow (sending a withdrawn quote, changing a sent one): 409 with the reason. */
const wrongState = (status: QuoteStatus, action: string) =>
  new AppError({
    code: 'conflict',
    details: { status },
    message: `A${/^[aeiou]/.test(status) ? 'n' : ''} ${status} quote cannot be ${action}${
      status === 'sent' && action === 'edited'
        ? ': the customer has it already; take it back and make a new one'
        : status === 'expired'
          ? ': it lapsed at the end of its valid-until day; write a new quote'
          : ''
    }`,
  })

async function change(
  deps: Deps,
  actor: Actor,
  id: number,
  version: number,
  allowed: QuoteStatus[],
  values: Partial<typeof s.quotes.$inferInsert>,
  action: string,
  tx0?: Trx,
) {
  const run = async (tx: Trx) => {
    const [cur] = await tx
      .select()
      .from(s.quotes)
      .where(and(eq(s.quotes.id, id), eq(s.quotes.workshopId, actor.workshopId)))
      .for('update')
    if (!cur) throw notFound('Quote')
    if (cur.version !== version) throw staleVersion('The quote')
    if (!allowed.includes(cur.status)) throw wrongState(cur.status, action)
    const next = { ...cur, ...values }
    if (next.depositMinor > next.priceMinor) throw invalid('depositMinor', 'must not be more than the price')
    // A change to a draft's dates is checked as a new quote's are.
    if (action === 'edited' && ('promisedDate' in values || 'validUntil' in values)) checkDates(next, await today(tx, actor.workshopId))
    const [u] = await tx
      .update(s.quotes)
      .set({ ...values, version: sql`${s.quotes.version} + 1` })
      .where(eq(s.quotes.id, id))
      .returning()
    await audit(tx, actor, action, 'quote', id, values as Record<string, unknown>)
    return u!
  }
  const u = tx0 ? await run(tx0) : await deps.db.transaction(run)
  if (!tx0) deps.realtime.emit(actor.workshopId, 'quote:changed', { id, version: u.version, status: u.status })
  return u
}

export async function updateQuote(deps: Deps, actor: Actor, id: number, input: QuoteUpdate) {
  const { version, ...values } = input
  // Only a draft changes: a sent quote is what the customer holds, with its deposit link at the provider.
  await change(deps, actor, id, version, ['drafted'], values, 'edited')
  return getQuote(deps.db, actor.workshopId, id)
}

export async function sendQuote(deps: Deps, actor: Actor, id: number, version: number) {
  await expireQuotes(deps, actor.workshopId)
  const before = await getQuote(deps.db, actor.workshopId, id)
  if (!['drafted', 'sent'].includes(before.status)) throw wrongState(before.status, 'sent')
  if (before.version !== version) throw staleVersion('The quote')
  // A draft kept before prices above zero were required is not sent for nothing, nor one kept with dates no longer allowed.
  if (before.priceMinor < 1) throw invalid('priceMinor', 'must be more than zero')
  if (before.status === 'drafted') checkDates(before, await today(deps.db, actor.workshopId))
  let link = before.links.find((l) => l.status === 'open' && l.purpose === 'deposit')
  if (!link && before.depositMinor > 0)
    link = await createLink(deps, actor, {
      quoteId: id,
      orderId: before.orderId,
      purpose: 'deposit',
      amountMinor: before.depositMinor,
      currency: before.currency,
      description: `Deposit for quote ${before.number}: ${before.title}`,
      customerEmail: before.customerEmail || undefined,
    })
  const [w] = await deps.db.select().from(s.workshops).where(eq(s.workshops.id, actor.workshopId))
  // A draft is issued as it is sent: it takes the VAT terms in force now, and keeps them once the customer holds it (sent again,
  // it says what it said).
  const issued = await change(
    deps,
    actor,
    id,
    version,
    ['drafted', 'sent'],
    { status: 'sent', sentAt: new Date().toISOString(), ...(before.status === 'drafted' ? storedVatTerms(w!) : {}) },
    'sent',
  )
  const content = quoteOffer({
    workshop: { name: w!.name, address: w!.address, phone: w!.phone, email: w!.contactEmail, vat: vatTermsOf(issued) },
    customerName: before.customerName,
    quoteNumber: before.number,
    title: before.title,
    description: before.description,
    currency: before.currency,
    priceMinor: before.priceMinor,
    depositMinor: before.depositMinor,
    promisedDate: before.promisedDate,
    validUntil: before.validUntil,
    depositUrl: link?.url ?? null,
  })
  await sendRecorded(deps, {
    workshopId: actor.workshopId,
    to: before.customerEmail,
    kind: 'quote',
    orderId: before.orderId,
    meta: { quoteId: id, linkId: link?.id ?? null },
    content,
  })
  return getQuote(deps.db, actor.workshopId, id)
}

export async function acceptQuote(deps: Deps, actor: Actor, id: number, version: number) {
  await expireQuotes(deps, actor.workshopId)
  const [q] = await deps.db
    .select()
    .from(s.quotes)
    .where(and(eq(s.quotes.id, id), eq(s.quotes.workshopId, actor.workshopId)))
  if (!q) throw notFound('Quote')
  if (!['drafted', 'sent'].includes(q.status)) throw wrongState(q.status, 'accepted')
  // A quote kept from before its dates were checked may still promise a day gone: its order would be late at birth.
  if (q.promisedDate && q.promisedDate < (await today(deps.db, actor.workshopId)))
    throw new AppError({
      code: 'conflict',
      details: { promisedDate: q.promisedDate },
      message: `Quote ${q.number} promised ${formatDayWithYear(q.promisedDate)}, a day gone: withdraw it and write a new quote with a date you can keep`,
    })
  let booking: Booking | null = null
  const [w] = await deps.db.select().from(s.workshops).where(eq(s.workshops.id, actor.workshopId))
  const vat = quoteVatAtAcceptance(q, w!)
  if (q.orderId) await change(deps, actor, id, version, ['drafted', 'sent'], { status: 'accepted', acceptedAt: new Date().toISOString(), ...vat }, 'accepted')
  else {
    const input = quoteOrderInput(q)
    const room = await quoteRoom(deps, actor, input)
    const { order, extra } = await takeOrder(
      deps,
      actor,
      input,
      async (tx, orderId) => {
        // The live plan's lock before the quote's row lock, as every change to the live plan takes them.
        await lockLivePlan(tx, actor.workshopId)
        await change(
          deps,
          actor,
          id,
          version,
          ['drafted', 'sent'],
          { status: 'accepted', acceptedAt: new Date().toISOString(), orderId, ...vat },
          'accepted',
          tx,
        )
        await tx.update(s.payments).set({ orderId }).where(eq(s.payments.quoteId, id))
        await tx.update(s.paymentLinks).set({ orderId }).where(eq(s.paymentLinks.quoteId, id))
        return bookQuoteOrder(tx, actor, orderId, room)
      },
      vat,
    )
    booking = extra
    const firstOp = order.jobBags[0]?.operations[0]
    if (booking.booked && firstOp) deps.realtime.emit(actor.workshopId, 'plan:changed', { id: firstOp.id, operationId: firstOp.id })
  }
  const after = await getQuote(deps.db, actor.workshopId, id)
  deps.realtime.emit(actor.workshopId, 'quote:changed', { id, version: after.version, status: after.status })
  return { ...after, booking }
}

export async function withdrawQuote(deps: Deps, actor: Actor, id: number, version: number) {
  await change(deps, actor, id, version, ['drafted', 'sent', 'expired'], { status: 'withdrawn', withdrawnAt: new Date().toISOString() }, 'withdrawn')
  const open = await deps.db
    .update(s.paymentLinks)
    .set({ status: 'expired' })
    .where(and(eq(s.paymentLinks.quoteId, id), eq(s.paymentLinks.status, 'open')))
    .returning()
  // Close the provider's pages too; a payment that still arrives is listed to be refunded.
  for (const l of open) await deps.pay?.stripe.checkout.sessions.expire(l.providerId).catch(() => {})
  return getQuote(deps.db, actor.workshopId, id)
}

export async function quoteLink(deps: Deps, actor: Actor, id: number, amountMinor?: number) {
  await expireQuotes(deps, actor.workshopId)
  const q = await getQuote(deps.db, actor.workshopId, id)
  if (!['drafted', 'sent'].includes(q.status)) throw wrongState(q.status, 'paid')
  const amount = amountMinor ?? q.depositMinor
  if (amount < 1) throw invalid('amountMinor', 'must be at least 1')
  if (amount > q.priceMinor) throw invalid('amountMinor', 'must not be more than the price')
  return createLink(deps, actor, {
    quoteId: id,
    orderId: q.orderId,
    purpose: 'deposit',
    amountMinor: amount,
    currency: q.currency,
    description: `Deposit for quote ${q.number}: ${q.title}`,
    customerEmail: q.customerEmail || undefined,
  })
}

/** Grams as the customer reads them: 6.2, 6.25, 12 (up to two decimals, no trailing zeros). */
const gramsWords = (g: number) => g.toLocaleString('en-GB', { maximumFractionDigits: 2 })

/**
 * The quote's metal line on paper: the metal by its name and, when the piece's weight was estimated, about how much of it — in
 * each piece of a run, or, on the customer's own piece (a repair, a resize), the metal added to it. Null when no metal is named.
 */
export function quoteMetalLine(d: { metal?: string; params?: Partial<PieceParams> }, customersPiece: boolean): string | null {
  const code = d.metal || (d.params?.metalWeightG !== undefined ? d.params.metal : undefined)
  if (!code) return null
  const g = d.params?.metalWeightG
  if (g === undefined) return `Metal: ${metalName(code)}`
  const each = (d.params?.quantity ?? 1) > 1 ? ' each' : ''
  return customersPiece
    ? `Metal: ${metalName(code)}, about ${gramsWords(g)} g added to your piece${each}`
    : `Metal: ${metalName(code)}, about ${gramsWords(g)} g${each}`
}

export async function quotePdf(db: Db, workshopId: number, id: number): Promise<Buffer> {
  const q = await getQuote(db, workshopId, id)
  const [w] = await db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  const m = (minor: number) => money(minorToMajor(minor, q.currency), q.currency)
  // The terms frozen on the quote, so a PDF made again says what the customer was given.
  const vat = vatTermsOf(await quoteVatTerms(db, id))
  const doc = new PDFDocument({ size: 'A4', margin: 56, info: { Title: `Quote ${q.number}` } })
  const chunks: Buffer[] = []
  doc.on('data', (c: Buffer) => chunks.push(c))
  const done = new Promise<Buffer>((r) => doc.on('end', () => r(Buffer.concat(chunks))))
  doc
    .fontSize(18)
    .text(w!.name)
    .fontSize(9)
    .text([w!.address, w!.phone, w!.contactEmail, vatNumberLine(vat)].filter(Boolean).join('  ·  '))
    .moveDown()
  doc
    .fontSize(16)
    .text(`Quote ${q.number}`)
    .fontSize(11)
    .text(`For ${q.customerName}`)
    .text(`Valid until ${dayjs(q.validUntil).format('D MMMM YYYY')}`)
    .moveDown()
  doc.fontSize(13).text(q.title).fontSize(11)
  if (q.description) doc.text(q.description)
  const d = q.details as {
    routingId?: number
    metal?: string
    params?: Partial<PieceParams>
    stones?: QuoteStone[]
  }
  // The metal by its name, not the code it is stored as, with the piece's estimated weight; stones as "count × what", their
  // weight in the words it was given (each or in all).
  const [routing] = d.routingId
    ? await db
        .select({ kind: s.routings.kind })
        .from(s.routings)
        .where(and(eq(s.routings.id, d.routingId), eq(s.routings.workshopId, workshopId)))
    : []
  const metal = quoteMetalLine(d, worksOnCustomersPiece(routing, d.params))
  if (metal) doc.text(metal)
  for (const st of d.stones ?? []) doc.text(`Stones: ${quoteStoneWords(st)}`)
  if (q.promisedDate) doc.moveDown().text(`Ready by ${dayjs(q.promisedDate).format('D MMMM YYYY')}`)
  const c = q.confidence as { p80?: string } | null
  if (c?.p80) doc.text(`(Our planning gives 4 in 5 chances of finishing by ${dayjs(c.p80).format('D MMMM YYYY')})`)
  doc
    .moveDown()
    .fontSize(12)
    .text(`Price: ${m(q.priceMinor)}`)
  const vatText = vatLine(q.priceMinor, vat, m)
  if (vatText) doc.fontSize(10).text(vatText).fontSize(12)
  doc.text(`Deposit to start the work: ${m(q.depositMinor)}`).text(`Balance at collection: ${m(q.priceMinor - q.depositMinor)}`)
  const link = q.links.find((l) => l.status === 'open')
  if (link) doc.moveDown().fontSize(10).text(`Pay the deposit: ${link.url}`)
  doc.end()
  return done
}

/** Daily: expire lapsed quotes, remind customers of quotes ending within 3 days (once) and of balances owed on pieces ready to collect (once a day). */
export async function sendMoneyReminders(deps: Pick<Deps, 'db' | 'realtime' | 'mailer'>, workshopId: number, now = new Date()) {
  await expireQuotes(deps, workshopId, now)
  const day = await today(deps.db, workshopId, now)
  const soon = dayjs(day).add(3, 'day').format('YYYY-MM-DD')
  const [w] = await deps.db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  const sent = await deps.db
    .select({ kind: s.outbox.kind, meta: s.outbox.meta, orderId: s.outbox.orderId, createdAt: s.outbox.createdAt })
    .from(s.outbox)
    .where(and(eq(s.outbox.workshopId, workshopId), inArray(s.outbox.kind, ['quote-reminder', 'balance-reminder'])))
  let n = 0
  for (const q of await deps.db
    .select({ ...cols, vatRegistered: s.quotes.vatRegistered, vatNumber: s.quotes.vatNumber, vatRateBasisPoints: s.quotes.vatRateBasisPoints })
    .from(s.quotes)
    .innerJoin(s.customers, eq(s.customers.id, s.quotes.customerId))
    .leftJoin(s.orders, eq(s.orders.id, s.quotes.orderId))
    .where(and(eq(s.quotes.workshopId, workshopId), eq(s.quotes.status, 'sent'), sql`${s.quotes.validUntil} <= ${soon}`))) {
    if (sent.some((x) => x.kind === 'quote-reminder' && x.meta?.quoteId === q.id)) continue
    await sendRecorded(deps, {
      workshopId,
      to: q.customerEmail,
      kind: 'quote-reminder',
      orderId: q.orderId,
      meta: { quoteId: q.id },
      content: quoteReminder({
        // The VAT terms the quote was issued with, not the workshop's as they are now.
        workshop: { name: w!.name, address: w!.address, phone: w!.phone, email: w!.contactEmail, vat: vatTermsOf(q) },
        customerName: q.customerName,
        quoteNumber: q.number,
        title: q.title,
        currency: q.currency,
        priceMinor: q.priceMinor,
        validUntil: q.validUntil,
      }),
    })
    n++
  }
  for (const o of await deps.db
    .select({ id: s.orders.id, number: s.orders.number, email: s.customers.email, name: s.customers.name })
    .from(s.orders)
    .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
    .where(and(eq(s.orders.workshopId, workshopId), eq(s.orders.status, 'ready')))) {
    if (sent.some((x) => x.kind === 'balance-reminder' && x.orderId === o.id && x.meta?.day === day)) continue
    const b = await balanceWithVat(deps.db, workshopId, o.id)
    if (b.balanceMinor <= 0) continue
    await sendRecorded(deps, {
      workshopId,
      to: o.email,
      kind: 'balance-reminder',
      orderId: o.id,
      meta: { day },
      content: balanceReminder({
        // The VAT terms the order's price was agreed under, not the workshop's as they are now.
        workshop: { name: w!.name, address: w!.address, phone: w!.phone, email: w!.contactEmail, vat: vatTermsOf(b.terms) },
        customerName: o.name,
        orderNumber: o.number,
        currency: b.currency,
        balanceMinor: b.balanceMinor,
        balanceVatMinor: b.vatMinor,
      }),
    })
    n++
  }
  return n
}
