// Money for orders and quotes: payment links through the provider, card payments booked only from its signed webhook (once per
// event id and once per payment id), cash and transfers by hand, refunds, what each order has paid and owes, the owner's summary.
import { and, asc, eq, inArray, isNull, or, sql } from 'drizzle-orm'
import type Stripe from 'stripe'
import type { ManualPaymentInput, PaymentLinkInput, RefundInput } from '../../shared/schemas/payment'
import type { Db, Trx } from '../db/client'
import * as s from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { money, signature } from '../mail/messages'
import { minorToDecimal, minorToMajor } from '../../shared/domain/currency'
import { paymentVat, refundVat, storedVatTerms, vatFiguresOf, vatLine, vatTermsOf, type StoredVatTerms } from '../../shared/domain/vat'
import { audit } from './audit'
import { sendRecorded } from './mail'
import { takeOrder } from './orders'
import { orderTerms, paidOf, workshopOf } from './order-terms'
import { bookQuoteOrder, quoteOrderInput, quoteRoom, quoteVatAtAcceptance } from './quote-order'
import { lockLivePlan } from '../planning/live-plan'

type Tx = Db | Trx
const STARTED = ['claimed', 'running', 'paused', 'done']

const noProvider = () =>
  new AppError({ code: 'unavailable', message: 'No payment provider is set up (STRIPE_SECRET_KEY and STRIPE_WEBHOOK_SECRET, or the local test provider)' })

const paymentCols = {
  id: s.payments.id,
  orderId: s.payments.orderId,
  quoteId: s.payments.quoteId,
  paymentLinkId: s.payments.paymentLinkId,
  method: s.payments.method,
  purpose: s.payments.purpose,
  amountMinor: s.payments.amountMinor,
  currency: s.payments.currency,
  providerRef: s.payments.providerRef,
  toRefund: s.payments.toRefund,
  refundOf: s.payments.refundOf,
  note: s.payments.note,
  recordedBy: s.payments.recordedBy,
  recordedByName: s.users.name,
  receivedAt: s.payments.receivedAt,
  createdAt: s.payments.createdAt,
  vatRegistered: s.payments.vatRegistered,
  vatNumber: s.payments.vatNumber,
  vatRateBasisPoints: s.payments.vatRateBasisPoints,
  vatMinor: s.payments.vatMinor,
}
/** What has been refunded against each payment (refunds name their payment in refund_of; they are negative). */
const refundedCol = sql<number>`(select coalesce(-sum(r.amount_minor), 0) from payments r where r.refund_of = ${s.payments.id})::int`.as('refunded_minor')

/**
 * Payments in the order they came in: by when each was paid to the minute (what a time entered by hand carries, and what the
 * screens show), then in the order they were recorded. Cash recorded as taken at 10:15 after a card payment at 10:15:40 comes
 * after it, not before (10:15:00 is only the minute the hand gave).
 */
const inOrderPaid = [asc(sql`date_trunc('minute', ${s.payments.receivedAt})`), asc(s.payments.id)]
/** The VAT a payment's receipt states, from the terms and VAT stored with it: null when it was taken without VAT. */
const paymentVatFigures = (p: StoredVatTerms & { vatMinor: number }) =>
  p.vatRegistered ? { ratePct: p.vatRateBasisPoints / 100, vatNumber: p.vatNumber, vatMinor: p.vatMinor } : null

export async function listPayments(db: Tx, where: ReturnType<typeof and>) {
  const rows = await db
    .select({ ...paymentCols, refundedMinor: refundedCol })
    .from(s.payments)
    .leftJoin(s.users, eq(s.users.id, s.payments.recordedBy))
    .where(where)
    .orderBy(...inOrderPaid)
  return rows.map(({ vatRegistered, vatNumber, vatRateBasisPoints, vatMinor, ...p }) => ({
    ...p,
    vat: paymentVatFigures({ vatRegistered, vatNumber, vatRateBasisPoints, vatMinor }),
  }))
}

/**
 * What a new payment's VAT is reckoned against: the order's price (before there is an order, the quote's) and the payments and
 * refunds already on it — on the order, or on its quote before the order took them over — less those kept to be refunded.
 */
async function paidSoFar(tx: Tx, workshopId: number, at: { orderId: number | null; quoteId: number | null }) {
  let priceMinor = 0
  const quoteIds = at.quoteId === null ? [] : [at.quoteId]
  if (at.orderId !== null) {
    const t = await orderTerms(tx, workshopId, at.orderId)
    priceMinor = t.priceMinor
    if (t.quote) quoteIds.push(t.quote.id)
  } else if (at.quoteId !== null) {
    const [q] = await tx.select({ priceMinor: s.quotes.priceMinor }).from(s.quotes).where(eq(s.quotes.id, at.quoteId))
    priceMinor = q?.priceMinor ?? 0
  }
  const mine = or(at.orderId === null ? undefined : eq(s.payments.orderId, at.orderId), quoteIds.length ? inArray(s.payments.quoteId, quoteIds) : undefined)
  const earlier = await tx
    .select({
      amountMinor: s.payments.amountMinor,
      vatMinor: s.payments.vatMinor,
      vatRegistered: s.payments.vatRegistered,
      vatNumber: s.payments.vatNumber,
      vatRateBasisPoints: s.payments.vatRateBasisPoints,
    })
    .from(s.payments)
    .where(and(eq(s.payments.workshopId, workshopId), eq(s.payments.toRefund, false), mine))
    .orderBy(asc(s.payments.id))
  return { priceMinor, earlier }
}

/**
 * The VAT terms and VAT a new payment is stored with: the workshop's terms as they are now (the day it is recorded is its tax
 * point), and its VAT by `paymentVat` against what is paid so far, so the one that settles the order carries the rest. A payment
 * kept to be refunded counts towards nothing: the VAT of its own amount. The caller holds the order's (or the quote's) row lock,
 * so two payments at once cannot both take the rest.
 */
async function vatOfNewPayment(tx: Trx, workshopId: number, at: { orderId: number | null; quoteId: number | null }, amountMinor: number, toRefund: boolean) {
  const terms = storedVatTerms(await workshopOf(tx, workshopId))
  if (toRefund || (at.orderId === null && at.quoteId === null)) return { ...terms, vatMinor: paymentVat(amountMinor, terms, { priceMinor: 0, earlier: [] }) }
  return { ...terms, vatMinor: paymentVat(amountMinor, terms, await paidSoFar(tx, workshopId, at)) }
}

/**
 * The balance still owed on an order and the VAT in it, under the terms frozen with its price (the quote's, or the order's): as
 * the payment that settles it will carry it when those terms are still in force — the rest of the price's VAT.
 */
export async function balanceWithVat(db: Tx, workshopId: number, orderId: number) {
  const t = await orderTerms(db, workshopId, orderId)
  const so = await paidSoFar(db, workshopId, { orderId, quoteId: t.quote?.id ?? null })
  const balanceMinor = Math.max(0, t.priceMinor - so.earlier.reduce((n, p) => n + p.amountMinor, 0))
  return { currency: t.currency, balanceMinor, vatMinor: paymentVat(balanceMinor, t.vatStored, so), terms: t.vatStored }
}

/** Holds an order's row until the transaction ends: payments on one order are recorded one at a time. */
const lockOrder = (tx: Trx, orderId: number) => tx.execute(sql`select id from orders where id = ${orderId} for update`)

const linkCols = {
  id: s.paymentLinks.id,
  quoteId: s.paymentLinks.quoteId,
  orderId: s.paymentLinks.orderId,
  purpose: s.paymentLinks.purpose,
  currency: s.paymentLinks.currency,
  amountMinor: s.paymentLinks.amountMinor,
  url: s.paymentLinks.url,
  status: s.paymentLinks.status,
  createdAt: s.paymentLinks.createdAt,
}

export async function orderMoney(db: Tx, workshopId: number, orderId: number) {
  const t = await orderTerms(db, workshopId, orderId)
  const payments = await listPayments(db, and(eq(s.payments.workshopId, workshopId), eq(s.payments.orderId, orderId)))
  const links = await db
    .select(linkCols)
    .from(s.paymentLinks)
    .where(and(eq(s.paymentLinks.workshopId, workshopId), eq(s.paymentLinks.orderId, orderId)))
    .orderBy(asc(s.paymentLinks.id))
  const paidMinor = paidOf(payments)
  // A cancelled order asks for nothing more (the Money page's "owed by customers" leaves it out too).
  const cancelled = t.order.status === 'cancelled'
  return {
    orderId,
    orderNumber: t.order.number,
    currency: t.currency,
    priceMinor: t.priceMinor,
    depositMinor: t.depositMinor,
    paidMinor,
    owedMinor: cancelled ? 0 : Math.max(0, t.priceMinor - paidMinor),
    depositPaid: paidMinor >= t.depositMinor,
    cancelled,
    vat: vatFiguresOf(t.priceMinor, t.vat),
    quoteId: t.quote?.id ?? null,
    payments,
    links,
  }
}

/** Where the customer lands after the hosted page (it books nothing: only the webhook does). */
async function returnBase(deps: Deps, workshopId: number) {
  const w = await workshopOf(deps.db, workshopId)
  return (w.publicUrl || deps.appUrl || 'http://127.0.0.1:8080').replace(/\/+$/, '')
}

/** Makes a checkout session with the provider for an amount and keeps it as a payment link. */
export async function createLink(
  deps: Deps,
  actor: Actor,
  o: {
    quoteId: number | null
    orderId: number | null
    purpose: 'deposit' | 'balance'
    amountMinor: number
    currency: string
    description: string
    customerEmail?: string
  },
) {
  if (!deps.pay) throw noProvider()
  const base = await returnBase(deps, actor.workshopId)
  const nonce = `${Date.now()}-${Math.random().toString(36).slice(2)}`
  let session: Stripe.Checkout.Session
  try {
    session = await deps.pay.stripe.checkout.sessions.create({
      mode: 'payment',
      line_items: [{ quantity: 1, price_data: { currency: o.currency.toLowerCase(), unit_amount: o.amountMinor, product_data: { name: o.description } } }],
      success_url: `${base}/payment-done?ref=${nonce}`,
      cancel_url: `${base}/payment-done?ref=${nonce}&cancelled=1`,
      metadata: {
        workshopId: String(actor.workshopId),
        purpose: o.purpose,
        description: o.description,
        ...(o.quoteId ? { quoteId: String(o.quoteId) } : {}),
        ...(o.orderId ? { orderId: String(o.orderId) } : {}),
      },
      ...(o.customerEmail ? { customer_email: o.customerEmail } : {}),
    })
  } catch (err) {
    throw new AppError({ code: 'unavailable', message: `The payment provider refused the payment link: ${(err as Error).message}` })
  }
  const link = await deps.db.transaction(async (tx) => {
    const [l] = await tx
      .insert(s.paymentLinks)
      .values({
        workshopId: actor.workshopId,
        quoteId: o.quoteId,
        orderId: o.orderId,
        purpose: o.purpose,
        currency: o.currency,
        amountMinor: o.amountMinor,
        providerId: session.id,
        url: session.url ?? '',
        createdBy: actor.userId,
      })
      .returning()
    await audit(tx, actor, 'create', 'payment-link', l!.id, { purpose: o.purpose, amountMinor: o.amountMinor, currency: o.currency })
    return l!
  })
  deps.realtime.emit(actor.workshopId, 'paymentLink:created', { id: link.id, orderId: link.orderId, quoteId: link.quoteId })
  return {
    id: link.id,
    quoteId: link.quoteId,
    orderId: link.orderId,
    purpose: link.purpose,
    currency: link.currency,
    amountMinor: link.amountMinor,
    url: link.url,
    status: link.status,
    createdAt: link.createdAt,
  }
}

export async function createOrderLink(deps: Deps, actor: Actor, orderId: number, input: PaymentLinkInput) {
  const m = await orderMoney(deps.db, actor.workshopId, orderId)
  const dueForPurpose = input.purpose === 'deposit' ? Math.max(0, m.depositMinor - m.paidMinor) : m.owedMinor
  if (dueForPurpose <= 0) throw invalid('purpose', input.purpose === 'deposit' ? 'the deposit is already paid' : 'nothing is owed on this order')
  const amount = input.amountMinor ?? dueForPurpose
  if (amount > m.owedMinor) throw invalid('amountMinor', `must not be more than what is owed (${m.owedMinor})`)
  const [c] = await deps.db
    .select({ email: s.customers.email })
    .from(s.customers)
    .where(eq(s.customers.id, (await orderTerms(deps.db, actor.workshopId, orderId)).order.customerId))
  return createLink(deps, actor, {
    quoteId: m.quoteId,
    orderId,
    purpose: input.purpose,
    amountMinor: amount,
    currency: m.currency,
    description: `${input.purpose === 'deposit' ? 'Deposit' : 'Balance'} for order ${m.orderNumber}`,
    customerEmail: c?.email || undefined,
  })
}

async function sendReceipt(deps: Deps, workshopId: number, paymentId: number) {
  const [p] = await deps.db.select().from(s.payments).where(eq(s.payments.id, paymentId))
  if (!p) return null
  const w = await workshopOf(deps.db, workshopId)
  const [q] = p.quoteId ? await deps.db.select().from(s.quotes).where(eq(s.quotes.id, p.quoteId)) : []
  const [o] = p.orderId ? await deps.db.select().from(s.orders).where(eq(s.orders.id, p.orderId)) : []
  const customerId = o?.customerId ?? q?.customerId
  if (!customerId) return null
  const [c] = await deps.db.select().from(s.customers).where(eq(s.customers.id, customerId))
  const what = o ? `order ${o.number}` : `quote ${q!.number}`
  const amount = money(minorToMajor(Math.abs(p.amountMinor), p.currency), p.currency)
  const refund = p.amountMinor < 0
  const left = o ? (await orderMoney(deps.db, workshopId, o.id)).owedMinor : null
  // The terms and VAT stored with the payment when it was recorded, whatever the workshop's settings are now.
  const vat = vatTermsOf(p)
  const lines = [
    `${refund ? 'Refunded' : 'Received'}: ${amount} (${p.method === 'card' ? 'card' : p.method === 'cash' ? 'cash' : 'bank transfer'}) on ${dayjs(p.receivedAt).tz(w.timeZone).format('D MMMM YYYY')}`,
    ...[vatLine(Math.abs(p.amountMinor), vat, (minor) => money(minorToMajor(minor, p.currency), p.currency), Math.abs(p.vatMinor))].filter(
      (l): l is string => !!l,
    ),
    ...(left !== null ? [`Still to pay on ${what}: ${money(minorToMajor(left, p.currency), p.currency)}`] : []),
  ]
  const text = [
    `Dear ${c?.name ?? 'customer'},`,
    '',
    refund ? `We have refunded ${amount} for ${what}.` : `Thank you: we have received ${amount} for ${what}.`,
    '',
    ...lines,
    '',
    // Signed as the quote e-mail is: name, address, telephone, e-mail, and the VAT number when registered.
    ...signature({ name: w.name, address: w.address, phone: w.phone, email: w.contactEmail, vat }).map((l, i) => (i === 0 ? `— ${l}` : l)),
  ].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${text
    .split('\n')
    .map((l) => (l ? `<p>${l.replace(/[&<>]/g, (x) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;' })[x]!)}</p>` : ''))
    .join('')}</div>`
  return sendRecorded(deps, {
    workshopId,
    to: c?.email ?? '',
    kind: 'payment-receipt',
    orderId: o?.id ?? null,
    meta: { paymentId, quoteId: q?.id ?? null },
    content: { subject: `${w.name}: ${refund ? 'refund' : 'receipt'} for ${what}`, text, html },
  })
}

class AlreadyBooked extends Error {}

/** The provider's webhook: the signature is checked on the raw body first; a bad one is 400 and books nothing. */
export async function handleWebhook(deps: Deps, raw: Buffer, signature: string | undefined) {
  if (!deps.pay) throw noProvider()
  if (!signature) throw invalid('Stripe-Signature', 'is missing')
  let event: Stripe.Event
  try {
    event = deps.pay.stripe.webhooks.constructEvent(raw, signature, deps.pay.webhookSecret)
  } catch (err) {
    throw invalid('Stripe-Signature', `does not match the payload (${(err as Error).message.split('\n')[0]})`)
  }
  const session = event.data.object as Stripe.Checkout.Session
  const booksMoney =
    (event.type === 'checkout.session.completed' || event.type === 'checkout.session.async_payment_succeeded') && session.payment_status === 'paid'
  const [link] = booksMoney ? await deps.db.select().from(s.paymentLinks).where(eq(s.paymentLinks.providerId, session.id)) : []
  if (!booksMoney || !link) {
    await deps.db
      .insert(s.providerEvents)
      .values({ id: event.id, workshopId: link?.workshopId ?? null, type: event.type, payload: event as unknown as Record<string, unknown> })
      .onConflictDoNothing()
    return { received: true, booked: false }
  }
  const [quote] = link.quoteId ? await deps.db.select().from(s.quotes).where(eq(s.quotes.id, link.quoteId)) : []
  const actor: Actor = { userId: link.createdBy ?? quote?.createdBy ?? 0, workshopId: link.workshopId, role: 'sales', personId: null, name: 'payment provider' }
  // A quote past its valid-until day has lapsed, whether or not the daily run has marked it yet: its money is kept to refund.
  const [zone] = await deps.db.select({ timeZone: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, link.workshopId))
  const day = dayjs()
    .tz(zone?.timeZone ?? 'Europe/London')
    .format('YYYY-MM-DD')
  const lapsedQuote = (q: typeof s.quotes.$inferSelect | undefined) =>
    !!q && (q.status === 'expired' || ((q.status === 'drafted' || q.status === 'sent') && q.validUntil < day))
  const providerRef = typeof session.payment_intent === 'string' ? session.payment_intent : (session.payment_intent?.id ?? session.id)

  const book = async (tx: Trx, newOrderId: number | null) => {
    const ins = await tx
      .insert(s.providerEvents)
      .values({ id: event.id, workshopId: link.workshopId, type: event.type, payload: event as unknown as Record<string, unknown> })
      .onConflictDoNothing()
      .returning({ id: s.providerEvents.id })
    if (!ins.length) throw new AlreadyBooked()
    const [q] = link.quoteId ? await tx.select().from(s.quotes).where(eq(s.quotes.id, link.quoteId)).for('update') : []
    const withdrawn = q?.status === 'withdrawn'
    const lapsed = lapsedQuote(q)
    const orderId = newOrderId ?? link.orderId ?? q?.orderId ?? null
    if (orderId !== null && newOrderId === null) await lockOrder(tx, orderId)
    const amountMinor = session.amount_total ?? link.amountMinor
    const vat = await vatOfNewPayment(tx, link.workshopId, { orderId, quoteId: link.quoteId }, amountMinor, withdrawn || lapsed)
    const [p] = await tx
      .insert(s.payments)
      .values({
        workshopId: link.workshopId,
        orderId,
        quoteId: link.quoteId,
        paymentLinkId: link.id,
        method: 'card',
        purpose: link.purpose,
        amountMinor,
        currency: (session.currency ?? link.currency).toUpperCase(),
        ...vat,
        providerRef,
        toRefund: withdrawn || lapsed,
        note: withdrawn ? 'paid after the quote was withdrawn' : lapsed ? 'paid after the quote lapsed' : '',
        recordedBy: null,
        receivedAt: new Date(event.created * 1000).toISOString(),
      })
      .onConflictDoNothing()
      .returning()
    if (!p) throw new AlreadyBooked()
    await tx.update(s.paymentLinks).set({ status: 'paid' }).where(eq(s.paymentLinks.id, link.id))
    let quoteChanged: { id: number; version: number; status: string } | null = null
    if (q && !withdrawn && !lapsed && q.status !== 'accepted') {
      const [u] = await tx
        .update(s.quotes)
        .set({
          status: 'accepted',
          acceptedAt: new Date().toISOString(),
          orderId,
          ...quoteVatAtAcceptance(q, await workshopOf(tx, link.workshopId)),
          version: sql`${s.quotes.version} + 1`,
        })
        .where(eq(s.quotes.id, q.id))
        .returning()
      quoteChanged = { id: u!.id, version: u!.version, status: u!.status }
    }
    if (q && orderId)
      await tx
        .update(s.payments)
        .set({ orderId })
        .where(and(eq(s.payments.quoteId, q.id), isNull(s.payments.orderId)))
    await audit(tx, actor, 'book', 'payment', p.id, {
      eventId: event.id,
      providerRef,
      amountMinor: p.amountMinor,
      currency: p.currency,
      toRefund: withdrawn || lapsed,
    })
    return { payment: p, quoteChanged }
  }

  let booked: Awaited<ReturnType<typeof book>>
  let planned: number | null = null
  try {
    const needsOrder = quote && quote.status !== 'withdrawn' && quote.status !== 'accepted' && !lapsedQuote(quote) && !quote.orderId && !link.orderId
    if (needsOrder) {
      const input = quoteOrderInput(quote)
      const room = await quoteRoom(deps, actor, input)
      const { order, extra } = await takeOrder(
        deps,
        actor,
        input,
        async (tx, orderId) => {
          // The live plan's lock before the quote's row lock, as every change to the live plan takes them.
          await lockLivePlan(tx, link.workshopId)
          const b = await book(tx, orderId)
          // The payment is on the order now: its deposit is in when it covers it. A clash only leaves it unbooked; the money stands.
          return { ...b, booking: await bookQuoteOrder(tx, actor, orderId, room) }
        },
        quoteVatAtAcceptance(quote, await workshopOf(deps.db, link.workshopId)),
      )
      booked = extra
      if (extra.booking.booked) planned = order.jobBags[0]?.operations[0]?.id ?? null
    } else booked = await deps.db.transaction((tx) => book(tx, null))
  } catch (err) {
    if (err instanceof AlreadyBooked) return { received: true, booked: false }
    if ((err as { code?: string }).code === '23505') return { received: true, booked: false }
    throw err
  }
  const p = booked.payment
  deps.realtime.emit(link.workshopId, 'payment:received', { id: p.id, orderId: p.orderId, quoteId: p.quoteId })
  if (booked.quoteChanged) deps.realtime.emit(link.workshopId, 'quote:changed', booked.quoteChanged)
  if (planned) deps.realtime.emit(link.workshopId, 'plan:changed', { id: planned, operationId: planned })
  await sendReceipt(deps, link.workshopId, p.id)
  return { received: true, booked: true }
}

export async function recordManual(deps: Deps, actor: Actor, orderId: number, input: ManualPaymentInput) {
  const m = await orderTerms(deps.db, actor.workshopId, orderId)
  const p = await deps.db.transaction(async (tx) => {
    await lockOrder(tx, orderId)
    const vat = await vatOfNewPayment(tx, actor.workshopId, { orderId, quoteId: m.quote?.id ?? null }, input.amountMinor, false)
    const [p] = await tx
      .insert(s.payments)
      .values({
        workshopId: actor.workshopId,
        orderId,
        quoteId: m.quote?.id ?? null,
        method: input.method,
        purpose: input.purpose,
        amountMinor: input.amountMinor,
        currency: m.currency,
        ...vat,
        note: input.note,
        recordedBy: actor.userId,
        receivedAt: input.receivedAt ? new Date(input.receivedAt).toISOString() : new Date().toISOString(),
      })
      .returning()
    await audit(tx, actor, 'record', 'payment', p!.id, { method: input.method, amountMinor: input.amountMinor, currency: m.currency })
    return p!
  })
  deps.realtime.emit(actor.workshopId, 'payment:received', { id: p.id, orderId, quoteId: p.quoteId })
  await sendReceipt(deps, actor.workshopId, p.id)
  return (await listPayments(deps.db, eq(s.payments.id, p.id)))[0]
}

/**
 * Owner only: returns money through the provider (card) or records it as handed back (cash, transfer). The payment is locked
 * while its refunds are summed and the new one is made, so two refunds at once cannot return more than was paid.
 */
export async function refund(deps: Deps, actor: Actor, paymentId: number, input: RefundInput) {
  const r = await deps.db.transaction(async (tx) => {
    const [orig] = await tx
      .select()
      .from(s.payments)
      .where(and(eq(s.payments.id, paymentId), eq(s.payments.workshopId, actor.workshopId)))
      .for('update')
    if (!orig) throw notFound('Payment')
    if (orig.amountMinor <= 0) throw invalid('paymentId', 'is a refund itself')
    if (orig.orderId !== null) await lockOrder(tx, orig.orderId)
    const earlierRefunds = await tx
      .select({ amountMinor: s.payments.amountMinor, vatMinor: s.payments.vatMinor })
      .from(s.payments)
      .where(eq(s.payments.refundOf, orig.id))
    const done = -earlierRefunds.reduce((t, r) => t + r.amountMinor, 0)
    const left = orig.amountMinor - done
    const amount = input.amountMinor ?? left
    if (left <= 0) throw invalid('amountMinor', 'this payment is already refunded in full')
    if (amount > left) throw invalid('amountMinor', `must not be more than what is left of the payment (${left} of ${orig.amountMinor})`)
    let providerRef: string | null = null
    if (orig.method === 'card') {
      if (!deps.pay) throw noProvider()
      try {
        const pr = await deps.pay.stripe.refunds.create({ payment_intent: orig.providerRef!, amount, metadata: { paymentId: String(orig.id) } })
        providerRef = pr.id
      } catch (err) {
        throw new AppError({ code: 'unprocessable', message: `The payment provider refused the refund: ${(err as Error).message}` })
      }
    }
    const [r] = await tx
      .insert(s.payments)
      .values({
        workshopId: actor.workshopId,
        orderId: orig.orderId,
        quoteId: orig.quoteId,
        paymentLinkId: orig.paymentLinkId,
        method: orig.method,
        purpose: 'refund',
        amountMinor: -amount,
        currency: orig.currency,
        // It gives back VAT under its payment's terms, whatever the workshop's are now.
        ...storedVatTerms(orig),
        vatMinor: refundVat(-amount, orig, earlierRefunds),
        providerRef,
        toRefund: orig.toRefund,
        refundOf: orig.id,
        note: input.note,
        recordedBy: actor.userId,
        receivedAt: new Date().toISOString(),
      })
      .returning()
    // Fully refunded: off the "to refund" list (the payment and its refunds then cancel out in what was paid).
    if (amount === left && orig.toRefund) {
      await tx.update(s.payments).set({ toRefund: false }).where(eq(s.payments.id, orig.id))
      await tx.update(s.payments).set({ toRefund: false }).where(eq(s.payments.refundOf, orig.id))
    }
    await audit(tx, actor, 'refund', 'payment', orig.id, { amountMinor: amount, currency: orig.currency, providerRef })
    return r!
  })
  deps.realtime.emit(actor.workshopId, 'payment:refunded', { id: r.id, orderId: r.orderId, quoteId: r.quoteId })
  await sendReceipt(deps, actor.workshopId, r.id)
  return (await listPayments(deps.db, eq(s.payments.id, r.id)))[0]
}

export async function toRefundList(db: Db, workshopId: number) {
  const rows = await listPayments(db, and(eq(s.payments.workshopId, workshopId), eq(s.payments.toRefund, true)))
  return rows.filter((p) => p.amountMinor > 0 && p.refundedMinor < p.amountMinor)
}

const isoWeek = (d: dayjs.Dayjs) => `${d.isoWeekYear()}-W${String(d.isoWeek()).padStart(2, '0')}`

/**
 * The owner's figures: received and refunded by ISO week (in the range asked for, and this week's always), owed by the ISO week the
 * order is promised, deposits held on work not started. With a range asked for, the weeks hold only what falls in it: money that moved
 * on a day of the range and what is owed on pieces promised (or due) on a day of the range; `owedInWeeksMinor` adds up those owed rows.
 * Without one, the last 12 weeks' money and every week something is owed.
 */
export async function summary(db: Db, workshopId: number, q: { from?: string; to?: string }) {
  const w = await workshopOf(db, workshopId)
  const to = q.to ?? dayjs().tz(w.timeZone).format('YYYY-MM-DD')
  const from = q.from ?? dayjs(to).subtract(12, 'week').format('YYYY-MM-DD')
  const ranged = q.from !== undefined || q.to !== undefined
  const weeks = new Map<string, { week: string; receivedMinor: number; refundedMinor: number; owedMinor: number }>()
  const at = (k: string) => weeks.get(k) ?? weeks.set(k, { week: k, receivedMinor: 0, refundedMinor: 0, owedMinor: 0 }).get(k)!
  // This week's figures whatever range is asked for: the owner's card says what came in this week.
  const thisWeek = { week: isoWeek(dayjs().tz(w.timeZone)), receivedMinor: 0, refundedMinor: 0, owedMinor: 0 }
  // VAT in what came in, payment by payment as each receipt states it (the VAT stored with it, under the terms it was taken
  // under), refunds taking theirs back; with the rates and VAT numbers those payments were taken under.
  const vatByWeek = new Map<string, number>()
  const rates = new Set<number>()
  const numbers = new Set<string>()
  let vatThisWeek = 0
  for (const p of await db
    .select()
    .from(s.payments)
    .where(and(eq(s.payments.workshopId, workshopId), eq(s.payments.toRefund, false)))
    .orderBy(asc(s.payments.receivedAt), asc(s.payments.id))) {
    const d = dayjs(p.receivedAt).tz(w.timeZone)
    const pVat = p.vatRegistered ? p.vatMinor : 0
    const thisWeekToo = isoWeek(d) === thisWeek.week
    if (thisWeekToo) {
      if (p.amountMinor >= 0) thisWeek.receivedMinor += p.amountMinor
      else thisWeek.refundedMinor -= p.amountMinor
      vatThisWeek += pVat
    }
    const day = d.format('YYYY-MM-DD')
    const inRange = day >= from && day <= to
    if (p.vatRegistered && (thisWeekToo || inRange)) {
      rates.add(p.vatRateBasisPoints)
      if (p.vatNumber) numbers.add(p.vatNumber)
    }
    if (!inRange) continue
    vatByWeek.set(isoWeek(d), (vatByWeek.get(isoWeek(d)) ?? 0) + pVat)
    if (p.amountMinor >= 0) at(isoWeek(d)).receivedMinor += p.amountMinor
    else at(isoWeek(d)).refundedMinor -= p.amountMinor
  }
  const open = await db
    .select()
    .from(s.orders)
    .where(and(eq(s.orders.workshopId, workshopId), sql`${s.orders.status} not in ('collected', 'cancelled')`))
  let owedMinor = 0,
    owedInWeeksMinor = 0,
    depositsHeldMinor = 0
  const depositsHeld: { orderId: number; orderNumber: string; customerName: string; paidMinor: number }[] = []
  for (const o of open) {
    const m = await orderMoney(db, workshopId, o.id)
    if (m.owedMinor > 0) {
      owedMinor += m.owedMinor
      const promised = o.promisedDate ?? o.dueDate
      const week = isoWeek(dayjs(promised))
      if (week === thisWeek.week) thisWeek.owedMinor += m.owedMinor
      if (!ranged || (promised >= from && promised <= to)) {
        at(week).owedMinor += m.owedMinor
        owedInWeeksMinor += m.owedMinor
      }
    }
    if (m.paidMinor > 0) {
      const started = await db
        .select({ id: s.operations.id })
        .from(s.operations)
        .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
        .where(and(eq(s.jobBags.orderId, o.id), inArray(s.operations.status, STARTED)))
        .limit(1)
      if (!started.length) {
        const [c] = await db.select({ name: s.customers.name }).from(s.customers).where(eq(s.customers.id, o.customerId))
        depositsHeldMinor += m.paidMinor
        depositsHeld.push({ orderId: o.id, orderNumber: o.number, customerName: c?.name ?? '', paidMinor: m.paidMinor })
      }
    }
  }
  return {
    currency: w.currency,
    from,
    to,
    weeks: [...weeks.values()].sort((a, b) => a.week.localeCompare(b.week)),
    thisWeek,
    owedMinor,
    owedInWeeksMinor,
    depositsHeldMinor,
    // Shown while the workshop is registered (its rate and number when nothing shown was taken with VAT yet), and while money
    // shown was taken with VAT, whatever the settings are now.
    vat:
      w.vatRegistered || rates.size
        ? {
            ratesPct: (rates.size ? [...rates] : [w.vatRateBasisPoints]).sort((a, b) => a - b).map((bp) => bp / 100),
            vatNumbers: numbers.size ? [...numbers] : w.vatNumber ? [w.vatNumber] : [],
            thisWeekMinor: vatThisWeek,
            weeks: [...weeks.keys()].sort().map((week) => ({ week, vatMinor: vatByWeek.get(week) ?? 0 })),
          }
        : null,
    depositsHeld,
  }
}

const csvCell = (v: unknown) => {
  const t = v === null || v === undefined ? '' : String(v)
  return /[",\n]/.test(t) || (/^[=+\-@]/.test(t) && !/^-?\d+(\.\d+)?$/.test(t)) ? `"${t.replace(/"/g, '""')}"` : t
}

export async function exportCsv(db: Db, workshopId: number, q: { from?: string; to?: string }) {
  const w = await workshopOf(db, workshopId)
  const rows = await db
    .select({ p: s.payments, orderNumber: s.orders.number, quoteNumber: s.quotes.number, customer: s.customers.name, by: s.users.name })
    .from(s.payments)
    .leftJoin(s.orders, eq(s.orders.id, s.payments.orderId))
    .leftJoin(s.quotes, eq(s.quotes.id, s.payments.quoteId))
    .leftJoin(s.customers, sql`${s.customers.id} = coalesce(${s.orders.customerId}, ${s.quotes.customerId})`)
    .leftJoin(s.users, eq(s.users.id, s.payments.recordedBy))
    .where(eq(s.payments.workshopId, workshopId))
    .orderBy(...inOrderPaid)
  // A VAT-registered workshop's accountant gets two last columns, as do the files holding any payment taken with VAT: the rate
  // each amount was taken at (its frozen terms, in per cent; empty when taken without VAT) and the VAT in it, as its receipt
  // stated it. Otherwise the file is as it was.
  const withVat = w.vatRegistered || rows.some((r) => r.p.vatRegistered)
  const lines = [
    [
      'received_at',
      'order',
      'quote',
      'customer',
      'method',
      'purpose',
      'amount',
      'currency',
      'to_refund',
      'provider_ref',
      'recorded_by',
      'note',
      ...(withVat ? ['vat_rate', 'vat'] : []),
    ].join(','),
  ]
  for (const r of rows) {
    const day = dayjs(r.p.receivedAt).tz(w.timeZone).format('YYYY-MM-DD')
    if ((q.from && day < q.from) || (q.to && day > q.to)) continue
    // Major units with the currency's own decimals (ISO 4217: 2 for GBP, none for JPY), written from the minor units digit by digit.
    const amount = minorToDecimal(r.p.amountMinor, r.p.currency)
    lines.push(
      [
        // The workshop's own wall clock with its offset (ISO 8601), so the date written is the day the summary counts it on.
        dayjs(r.p.receivedAt).tz(w.timeZone).format(),
        r.orderNumber,
        r.quoteNumber,
        r.customer,
        r.p.method,
        r.p.purpose,
        amount,
        r.p.currency,
        r.p.toRefund ? 'yes' : 'no',
        r.p.providerRef,
        r.by,
        r.p.note,
        ...(withVat ? [r.p.vatRegistered ? String(r.p.vatRateBasisPoints / 100) : '', minorToDecimal(r.p.vatRegistered ? r.p.vatMinor : 0, r.p.currency)] : []),
      ]
        .map(csvCell)
        .join(','),
    )
  }
  return lines.join('\r\n') + '\r\n'
}
