// Payments against orders: payment links, cash and transfers recorded by hand, refunds; amounts in integer minor units.
import { z } from 'zod'
import { isoDate, isoDateTime } from './common'
import { minorAmount } from './quote'

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
