// An order's money terms (price and deposit, from its accepted quote or its own price) and what is paid against them: read by
// the payments and by the deposit hold, which the planning problem uses (so this module stays clear of payments' imports).
import { storedVatTerms, vatTermsOf } from '../../shared/domain/vat'
import { and, desc, eq, inArray, sql } from 'drizzle-orm'
import type { Db, Trx } from '../db/client'
import * as s from '../db/schema/index'
import { notFound } from '../errors/app-error'

type Tx = Db | Trx

export async function workshopOf(db: Tx, workshopId: number) {
  const [w] = await db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  if (!w) throw notFound('Workshop')
  return w
}

/**
 * An order's price and deposit in minor units: its accepted quote's, else the order's quoted price and the deposit % it was taken with;
 * with the VAT terms frozen with that price (the quote's, else the order's), never the workshop's as they are now.
 */
export async function orderTerms(db: Tx, workshopId: number, orderId: number) {
  const [o] = await db
    .select()
    .from(s.orders)
    .where(and(eq(s.orders.id, orderId), eq(s.orders.workshopId, workshopId)))
  if (!o) throw notFound('Order')
  const w = await workshopOf(db, workshopId)
  const [q] = await db
    .select()
    .from(s.quotes)
    .where(and(eq(s.quotes.orderId, orderId), inArray(s.quotes.status, ['accepted', 'sent', 'drafted'])))
    .orderBy(sql`${s.quotes.status} = 'accepted' desc`, desc(s.quotes.id))
    .limit(1)
  // The order's own price is stored in minor units of the workshop's currency already: no conversion.
  const priceMinor = q ? q.priceMinor : o.priceQuotedMinor
  // Without a quote, the deposit % kept with the order when it was taken (the workshop's default only for a row without one).
  const depositMinor = q ? q.depositMinor : Math.round((priceMinor * (o.depositPct ?? w.depositPct)) / 100)
  const vatStored = storedVatTerms(q ?? o)
  return { order: o, quote: q ?? null, currency: q?.currency ?? w.currency, priceMinor, depositMinor, vatStored, vat: vatTermsOf(vatStored) }
}

/** Paid counts every payment that is not waiting to be refunded (refunds are negative and lower it). */
export const paidOf = (rows: { amountMinor: number; toRefund: boolean }[]) => rows.filter((p) => !p.toRefund).reduce((t, p) => t + p.amountMinor, 0)

/** Orders (of those given) whose deposit is not yet in: the planner holds their metal work when the workshop says so. */
export async function ordersAwaitingDeposit(db: Tx, workshopId: number, orderIds: number[]): Promise<Set<number>> {
  const out = new Set<number>()
  for (const id of orderIds) {
    const m = await orderTerms(db, workshopId, id)
    if (m.depositMinor <= 0) continue
    const rows = await db.select({ amountMinor: s.payments.amountMinor, toRefund: s.payments.toRefund }).from(s.payments).where(eq(s.payments.orderId, id))
    if (paidOf(rows) < m.depositMinor) out.add(id)
  }
  return out
}
