// Payments API: an order's money (paid, owed, links), payment links, cash and transfers recorded by hand, refunds, the owner's summary and CSV.
import { api } from './client'

export type PaymentMethod = 'card' | 'cash' | 'bank-transfer'
export type PaymentPurpose = 'deposit' | 'balance' | 'refund' | 'other'

export interface PaymentLink {
  id: number
  quoteId: number | null
  orderId: number | null
  purpose: 'deposit' | 'balance'
  currency: string
  amountMinor: number
  url: string
  status: 'open' | 'paid' | 'expired'
  createdAt: string
}
export interface Payment {
  id: number
  orderId: number | null
  quoteId: number | null
  paymentLinkId: number | null
  method: PaymentMethod
  purpose: PaymentPurpose
  /** Negative for a refund. */
  amountMinor: number
  currency: string
  providerRef: string | null
  toRefund: boolean
  note: string
  recordedBy: number | null
  recordedByName: string | null
  receivedAt: string
  createdAt: string
  /** What has been refunded of it so far (≥ 0). */
  refundedMinor: number
}
export interface OrderMoney {
  orderId: number
  orderNumber: string
  currency: string
  priceMinor: number
  depositMinor: number
  /** Net of refunds; payments waiting to be refunded do not count. */
  paidMinor: number
  owedMinor: number
  depositPaid: boolean
  quoteId: number | null
  payments: Payment[]
  links: PaymentLink[]
}
export interface PaymentInput {
  method: 'cash' | 'bank-transfer'
  purpose: 'deposit' | 'balance' | 'other'
  amountMinor: number
  receivedAt?: string
  note?: string
}
export interface MoneyWeek {
  week: string
  receivedMinor: number
  refundedMinor: number
  owedMinor: number
}
export interface MoneySummary {
  currency: string
  weeks: MoneyWeek[]
  owedMinor: number
  depositsHeldMinor: number
  depositsHeld: { orderId: number; orderNumber: string; customerName: string; paidMinor: number }[]
}

export const getOrderMoney = (orderId: number) => api.get<OrderMoney>(`/orders/${orderId}/money`)
export const createOrderLink = (orderId: number, body: { purpose: 'deposit' | 'balance'; amountMinor?: number }) =>
  api.post<PaymentLink>(`/orders/${orderId}/payment-links`, body)
export const recordPayment = (orderId: number, body: PaymentInput) => api.post<Payment>(`/orders/${orderId}/payments`, body)
export const refundPayment = (paymentId: number, body: { amountMinor?: number; note?: string } = {}) => api.post<Payment>(`/payments/${paymentId}/refund`, body)
export const listToRefund = () => api.get<Payment[]>('/payments/to-refund')
export const getMoneySummary = (p: { from?: string; to?: string } = {}) => api.get<MoneySummary>('/payments/summary', { query: { ...p } })
export const moneyCsvUrl = (p: { from?: string; to?: string } = {}) => {
  const qs = new URLSearchParams(Object.entries(p).filter(([, v]) => !!v) as [string, string][]).toString()
  return `/api/payments/export.csv${qs ? `?${qs}` : ''}`
}
