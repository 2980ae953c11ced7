// Payments API: an order's money (paid, owed, links), payment links, cash and transfers recorded by hand, refunds, the owner's summary and CSV.
import { z } from 'zod'
import { moneySummary, orderMoney, payment, paymentLink, type manualPaymentInput } from '@shared/schemas/payment'
import { api } from './client'

export type { MoneySummary, MoneyWeek, OrderMoney, Payment, PaymentLink, PaymentMethod, PaymentPurpose } from '@shared/schemas/payment'
export type PaymentInput = z.input<typeof manualPaymentInput>

export const getOrderMoney = (orderId: number) => api.get(`/orders/${orderId}/money`, { schema: orderMoney })
export const createOrderLink = (orderId: number, body: { purpose: 'deposit' | 'balance'; amountMinor?: number }) =>
  api.post(`/orders/${orderId}/payment-links`, body, { schema: paymentLink })
export const recordPayment = (orderId: number, body: PaymentInput) => api.post(`/orders/${orderId}/payments`, body, { schema: payment })
export const refundPayment = (paymentId: number, body: { amountMinor?: number; note?: string } = {}) =>
  api.post(`/payments/${paymentId}/refund`, body, { schema: payment })
export const listToRefund = () => api.get('/payments/to-refund', { schema: z.array(payment) })
export const getMoneySummary = (p: { from?: string; to?: string } = {}) => api.get('/payments/summary', { query: { ...p }, schema: moneySummary })
export const moneyCsvUrl = (p: { from?: string; to?: string } = {}) => {
  const qs = new URLSearchParams(Object.entries(p).filter(([, v]) => !!v) as [string, string][]).toString()
  return `/api/payments/export.csv${qs ? `?${qs}` : ''}`
}
