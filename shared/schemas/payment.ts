// Payments against orders: payment links, cash and transfers recorded by hand, refunds; amounts in integer minor units.
import { z } from 'zod'
import { isoDate, isoDateTime, wireInt } from './common'

/** An amount in minor units (pence, cents): a whole number, never negative. */
export const minorAmount = z
  .number({ error: 'must be an amount' })
  .int('must be a whole number of minor units (e.g. pence)')
  .min(0, 'must be 0 or more')
  .max(1_000_000_000, 'is too large')

export const paymentLinkInput = z.object({
  purpose: z.enum(['deposit', 'balance'], { error: 'must be deposit or balance' }),
  amountMinor: minorAmount.min(1, 'must be at least 1').optional(),
})
export const manualPaymentInput = z.object({
  method: z.enum(['cash', 'bank-transfer'], { error: 'must be cash or bank-transfer' }),
  purpose: z.enum(['deposit', 'balance', 'other'], { error: 'must be deposit, balance or other' }).default('balance'),
  amountMinor: minorAmount.min(1, 'must be at least 1'),
  receivedAt: isoDateTime.optional(),
  note: z.string().max(500, 'must be at most 500 characters').default(''),
})
export const refundInput = z.object({
  amountMinor: minorAmount.min(1, 'must be at least 1').optional(),
  note: z.string().max(500, 'must be at most 500 characters').default(''),
})
export const moneyRangeQuery = z.object({ from: isoDate.optional(), to: isoDate.optional() })
export type PaymentLinkInput = z.infer<typeof paymentLinkInput>
export type ManualPaymentInput = z.infer<typeof manualPaymentInput>
export type RefundInput = z.infer<typeof refundInput>

// ---- Answers ----

export const PAYMENT_METHODS = ['card', 'cash', 'bank-transfer'] as const
export type PaymentMethod = (typeof PAYMENT_METHODS)[number]
export const PAYMENT_PURPOSES = ['deposit', 'balance', 'refund', 'other'] as const
export type PaymentPurpose = (typeof PAYMENT_PURPOSES)[number]

/** A payment link at the provider, for a quote's deposit or an order's deposit or balance. */
export const paymentLink = z.object({
  id: wireInt,
  quoteId: wireInt.nullable(),
  orderId: wireInt.nullable(),
  purpose: z.enum(['deposit', 'balance']),
  currency: z.string(),
  amountMinor: wireInt,
  url: z.string(),
  status: z.enum(['open', 'paid', 'expired']),
  createdAt: z.string(),
})
export type PaymentLink = z.infer<typeof paymentLink>

/** Money received or handed back (a refund is negative and names the payment it refunds). */
export const payment = z.object({
  id: wireInt,
  orderId: wireInt.nullable(),
  quoteId: wireInt.nullable(),
  paymentLinkId: wireInt.nullable(),
  method: z.enum(PAYMENT_METHODS),
  purpose: z.enum(PAYMENT_PURPOSES),
  /** Negative for a refund. */
  amountMinor: wireInt,
  currency: z.string(),
  providerRef: z.string().nullable(),
  toRefund: z.boolean(),
  refundOf: wireInt.nullable(),
  note: z.string(),
  recordedBy: wireInt.nullable(),
  recordedByName: z.string().nullable(),
  receivedAt: z.string(),
  createdAt: z.string(),
  /** What has been refunded of it so far (≥ 0). */
  refundedMinor: wireInt,
  /**
   * The VAT in it as its receipt states it, under the terms in force when it was recorded (a refund: its payment's, negative):
   * the rate in per cent, the VAT number, the VAT in minor units; null when it was taken without VAT. The payment that settled
   * its order carries the rest of the price's VAT, so it can be a penny off the VAT of its own amount.
   */
  vat: z.object({ ratePct: z.number(), vatNumber: z.string(), vatMinor: wireInt }).nullable(),
})
export type Payment = z.infer<typeof payment>

/**
 * The VAT in a VAT-inclusive price under the terms frozen with it (the quote's, or the order's), null when those were not
 * registered: the rate in per cent, the VAT number, the VAT and what is left before VAT, in minor units.
 */
export const vatFigures = z.object({ ratePct: z.number(), vatNumber: z.string(), vatMinor: wireInt, netMinor: wireInt }).nullable()
export type VatFigures = z.infer<typeof vatFigures>

/** What an order costs, has paid and owes, with its payments and links. */
export const orderMoney = z.object({
  orderId: wireInt,
  orderNumber: z.string(),
  currency: z.string(),
  priceMinor: wireInt,
  depositMinor: wireInt,
  /** Net of refunds; payments waiting to be refunded do not count. */
  paidMinor: wireInt,
  /** Nothing is owed on a cancelled order: what was paid on it is for the office to refund or keep, never to collect more. */
  owedMinor: wireInt,
  depositPaid: z.boolean(),
  /** The order was cancelled: nothing more is asked of the customer. */
  cancelled: z.boolean().optional(),
  /** The VAT in the price. */
  vat: vatFigures,
  quoteId: wireInt.nullable(),
  payments: z.array(payment),
  links: z.array(paymentLink),
})
export type OrderMoney = z.infer<typeof orderMoney>

export const moneyWeek = z.object({ week: z.string(), receivedMinor: wireInt, refundedMinor: wireInt, owedMinor: wireInt })
export type MoneyWeek = z.infer<typeof moneyWeek>
/** The owner's figures: received and refunded by ISO week, owed by the week promised, deposits held on work not started. */
export const moneySummary = z.object({
  currency: z.string(),
  from: z.string(),
  to: z.string(),
  weeks: z.array(moneyWeek),
  /** The current ISO week in the workshop's zone, whatever the range. */
  thisWeek: moneyWeek,
  /** Owed on every open order, whatever the range. */
  owedMinor: wireInt,
  /** Owed in the weeks listed: the sum of their owed figures. */
  owedInWeeksMinor: wireInt,
  depositsHeldMinor: wireInt,
  /**
   * When registered for VAT, or money shown was taken with VAT: the VAT in what came in (received less refunded), this week's and
   * each listed week's, payment by payment as stored with each; the rates (per cent, lowest first) and VAT numbers that money was
   * taken under (the workshop's own when none was yet).
   */
  vat: z
    .object({
      ratesPct: z.array(z.number()),
      vatNumbers: z.array(z.string()),
      thisWeekMinor: wireInt,
      weeks: z.array(z.object({ week: z.string(), vatMinor: wireInt })),
    })
    .nullable(),
  depositsHeld: z.array(z.object({ orderId: wireInt, orderNumber: z.string(), customerName: z.string(), paidMinor: wireInt })),
})
export type MoneySummary = z.infer<typeof moneySummary>
