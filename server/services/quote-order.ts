// What an accepted quote becomes as an order: used when the office accepts it (quotes.ts) and when its deposit is paid by
// card (payments.ts), so both make the same order and book it into the live plan the same way.
import { eq } from 'drizzle-orm'
import { pieceParams, type OrderInput } from '../../shared/schemas/order'
import { quotedStones, type QuoteStone } from '../../shared/schemas/quote'
import { storedVatTerms, type StoredVatTerms } from '../../shared/domain/vat'
import type { Trx } from '../db/client'
import * as s from '../db/schema/index'
import { AppError } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { depositHolds } from './deposit-hold'
import type { TakenOrder } from './orders'
import { bookSlot, roomFor, type Booking, type Room } from './promise'

/**
 * The VAT terms a quote is accepted under, which the order made from it keeps: those frozen on it when it was written or sent;
 * a draft accepted without being sent is issued there and then, so it takes the workshop's as they are now (as sending it would).
 */
export const quoteVatAtAcceptance = (q: typeof s.quotes.$inferSelect, workshop: StoredVatTerms): StoredVatTerms =>
  storedVatTerms(q.status === 'drafted' ? workshop : q)

/**
 * What an accepted quote becomes: one piece from the quoted routing (none when the quote names no routing), keeping the quote's
 * stone rows with their costs, which the quote's estimate counted as that piece's stones.
 */
export function quoteOrderInput(q: typeof s.quotes.$inferSelect): TakenOrder {
  const d = q.details as { routingId?: number; piece?: string; params?: OrderInput['pieces'][number]['params']; priority?: number; stones?: QuoteStone[] }
  const due = q.promisedDate ?? q.validUntil
  return {
    customerId: q.customerId,
    title: q.title,
    dueDate: due,
    promisedDate: q.promisedDate,
    priority: d.priority ?? 3,
    priceQuotedMinor: q.priceMinor,
    notes: `From quote ${q.number}`,
    // The quoted parameters with the order form's defaults filled in (metal, quantity, …), as the order form would send them.
    pieces: d.routingId
      ? [{ routingId: d.routingId, piece: d.piece ?? q.title, params: pieceParams.parse(d.params ?? {}), quotedStones: quotedStones(d.stones) }]
      : [],
  }
}

/**
 * Where the quoted piece finds room in the live plan as the quote is accepted: the promise's placement, worked out afresh then
 * (a quote keeps its promised date, not the room found when it was written), before the order's transaction. It never stands
 * in the way of the order: when it cannot be worked out, the order is only not booked.
 */
export async function quoteRoom(deps: Deps, actor: Actor, input: OrderInput, now = new Date()): Promise<Room> {
  try {
    return await roomFor(deps, actor, input, now)
  } catch (err) {
    if (!(err instanceof AppError)) console.error('[quote] placing the order:', err)
    return { reason: `the plan cannot place it (${(err as Error).message})` }
  }
}

/**
 * Books the order made from a quote where `quoteRoom` found room, in the order's transaction (which took the live plan's lock
 * first) once the quote and its payments are on the order: not while its metal work waits for the deposit, and a clash books
 * nothing (the planning module's booking says which booking took the room). The order stands either way; the audit says why
 * it was not booked, and the order's forecast (its drawer) reads it from there while its work is off the plan.
 */
export async function bookQuoteOrder(tx: Trx, actor: Actor, orderId: number, room: Room): Promise<Booking> {
  let booking: Booking
  if ('reason' in room) booking = { booked: false, reason: room.reason }
  else {
    const bags = await tx.select({ id: s.jobBags.id }).from(s.jobBags).where(eq(s.jobBags.orderId, orderId))
    const [held] = (
      await depositHolds(
        tx,
        actor.workshopId,
        bags.map((b) => b.id),
      )
    ).values()
    booking = held
      ? { booked: false, reason: `${held.reason}: the planner leaves it out until the deposit is in` }
      : await bookSlot(tx, actor, room.data, orderId, room.placed)
  }
  if (!booking.booked) await audit(tx, actor, 'not-booked', 'order', orderId, { reason: booking.reason })
  return booking
}
