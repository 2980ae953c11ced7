// What an accepted quote becomes as an order: used when the office accepts it (quotes.ts) and when its deposit is paid by
// card (payments.ts), so both make the same order.
import { pieceParams, type OrderInput } from '../../shared/schemas/order'
import type * as s from '../db/schema/index'

/** What an accepted quote becomes: one piece from the quoted routing (none when the quote names no routing). */
export function quoteOrderInput(q: typeof s.quotes.$inferSelect): OrderInput {
  const d = q.details as { routingId?: number; piece?: string; params?: OrderInput['pieces'][number]['params']; priority?: number }
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
    pieces: d.routingId ? [{ routingId: d.routingId, piece: d.piece ?? q.title, params: pieceParams.parse(d.params ?? {}) }] : [],
  }
}
