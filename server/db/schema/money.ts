// Money for commissions: quotes sent to customers, the payments taken against orders (deposit, balance, refunds), and the
// payment provider's events as received, so each is booked once. Amounts are integer minor units with their currency.
import { type AnyPgColumn, boolean, date, index, integer, jsonb, pgTable, text, uniqueIndex } from 'drizzle-orm/pg-core'
import { createdAt, frozenVatTerms, instant, pk, version } from './common'
import { customers, orders } from './work'
import { users, workshops } from './workshop'

/** A quote: drafted → sent → accepted, or it lapses (expired) or is taken back (withdrawn). */
export const quotes = pgTable(
  'quotes',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    number: text().notNull(),
    customerId: integer()
      .notNull()
      .references(() => customers.id),
    /** The order it became (accepted), or the order it was made for. */
    orderId: integer().references(() => orders.id, { onDelete: 'set null' }),
    status: text().$type<'drafted' | 'sent' | 'accepted' | 'expired' | 'withdrawn'>().notNull().default('drafted'),
    title: text().notNull(),
    description: text().notNull().default(''),
    /** What the piece is made of and from: the piece parameters, routing, metal and stones as quoted. */
    details: jsonb().$type<Record<string, unknown>>().notNull().default({}),
    promisedDate: date({ mode: 'string' }),
    /** The promise's confidence as quoted (e.g. { p50, p80, p95 }). */
    confidence: jsonb().$type<Record<string, unknown>>(),
    currency: text().notNull(),
    priceMinor: integer().notNull(),
    depositMinor: integer().notNull(),
    /** The VAT terms it was written under, taken again when a draft is sent: its PDF and e-mail say them whatever the settings become. */
    ...frozenVatTerms(),
    validUntil: date({ mode: 'string' }).notNull(),
    sentAt: instant(),
    acceptedAt: instant(),
    withdrawnAt: instant(),
    createdBy: integer().references(() => users.id, { onDelete: 'set null' }),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.number), index().on(t.customerId), index().on(t.orderId)],
)

/**
 * A payment link made with the provider for a quote's deposit or an order's balance. The link is the provider's
 * hosted page: card data never reaches this server.
 */
export const paymentLinks = pgTable(
  'payment_links',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    quoteId: integer().references(() => quotes.id, { onDelete: 'set null' }),
    orderId: integer().references(() => orders.id, { onDelete: 'set null' }),
    purpose: text().$type<'deposit' | 'balance'>().notNull(),
    currency: text().notNull(),
    amountMinor: integer().notNull(),
    /** The provider's id of the checkout session and its URL. */
    providerId: text().notNull(),
    url: text().notNull(),
    status: text().$type<'open' | 'paid' | 'expired'>().notNull().default('open'),
    createdBy: integer().references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.providerId), index().on(t.orderId)],
)

/**
 * Money in and out for an order (or a quote not yet an order): card payments booked from the provider's signed webhook
 * only, cash and bank transfers recorded by hand, refunds (negative). One provider payment is booked once (unique).
 */
export const payments = pgTable(
  'payments',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    orderId: integer().references(() => orders.id, { onDelete: 'set null' }),
    quoteId: integer().references(() => quotes.id, { onDelete: 'set null' }),
    paymentLinkId: integer().references(() => paymentLinks.id, { onDelete: 'set null' }),
    method: text().$type<'card' | 'cash' | 'bank-transfer'>().notNull(),
    purpose: text().$type<'deposit' | 'balance' | 'refund' | 'other'>().notNull(),
    /** Signed: a refund is negative. */
    amountMinor: integer().notNull(),
    currency: text().notNull(),
    /**
     * The VAT terms in force when it was recorded (a refund: its payment's) and the VAT in the amount as its receipt states it,
     * signed as the amount (0 when not registered): worked out once, when recorded (`paymentVat`, `refundVat` in shared/domain/vat.ts).
     */
    ...frozenVatTerms(),
    vatMinor: integer().notNull(),
    /** The provider's payment (or refund) id; null for cash and transfers. */
    providerRef: text(),
    /** A payment that arrived for a withdrawn quote or an order that owes nothing: listed to be refunded. */
    toRefund: boolean().notNull().default(false),
    /** For a refund: the payment it gives money back from (null for other rows). */
    refundOf: integer().references((): AnyPgColumn => payments.id, { onDelete: 'set null' }),
    note: text().notNull().default(''),
    recordedBy: integer().references(() => users.id, { onDelete: 'set null' }),
    receivedAt: instant().notNull(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.providerRef), index().on(t.orderId), index().on(t.workshopId, t.receivedAt), index().on(t.refundOf)],
)

/** Every provider event as received (signature already checked): the event id is unique, so a replay is a no-op. */
export const providerEvents = pgTable('provider_events', {
  id: text().primaryKey(),
  workshopId: integer().references(() => workshops.id, { onDelete: 'cascade' }),
  type: text().notNull(),
  payload: jsonb().$type<Record<string, unknown>>().notNull(),
  receivedAt: createdAt(),
})
