// Quotes API: the list, one quote with its payment links and payments, drafting, sending, accepting, withdrawing, its PDF and a deposit link.
import type { z } from 'zod'
import { paymentLink } from '@shared/schemas/payment'
import { quoteAccepted, quoteDetail, quotePage, type Quote as QuoteRow, type QuoteDetail, type quoteInput, type quoteUpdate } from '@shared/schemas/quote'
import { api } from './client'

export { QUOTE_STATUSES } from '@shared/schemas/quote'
export type { QuoteAccepted, QuoteConfidence, QuoteDetails, QuoteStatus, QuoteStone } from '@shared/schemas/quote'
/** A quote as a screen holds it: a list row, with its links, payments and what is paid once it was read on its own. */
export type Quote = QuoteRow & Partial<Pick<QuoteDetail, 'links' | 'payments' | 'paidMinor' | 'vat'>>
export type QuoteInput = z.input<typeof quoteInput>

export interface QuoteListParams {
  status?: string
  q?: string
  orderId?: number
  page?: number
  pageSize?: number
}

/** Several states (comma-separated here) go as repeated `status` parameters, as the server reads them. */
export function listQuotes(p: QuoteListParams = {}) {
  const qs = new URLSearchParams()
  for (const st of (p.status ?? '')
    .split(',')
    .map((x) => x.trim())
    .filter(Boolean))
    qs.append('status', st)
  for (const [k, v] of Object.entries({ q: p.q, orderId: p.orderId, page: p.page, pageSize: p.pageSize })) if (v !== undefined && v !== '') qs.set(k, String(v))
  const s = qs.toString()
  return api.get(`/quotes${s ? `?${s}` : ''}`, { schema: quotePage })
}
export const getQuote = (id: number) => api.get(`/quotes/${id}`, { schema: quoteDetail })
export const createQuote = (body: QuoteInput) => api.post('/quotes', body, { schema: quoteDetail })
/** What a quote's change may carry (customer, order and currency stay as drafted). */
export type QuoteUpdate = z.input<typeof quoteUpdate>
export const updateQuote = (id: number, body: QuoteUpdate) => api.patch(`/quotes/${id}`, body, { schema: quoteDetail })
export const sendQuote = (id: number, version: number) => api.post(`/quotes/${id}/send`, { version }, { schema: quoteDetail })
/** Accepting answers whether the order made from the quote was booked into the live plan (`booking`). */
export const acceptQuote = (id: number, version: number) => api.post(`/quotes/${id}/accept`, { version }, { schema: quoteAccepted })
export const withdrawQuote = (id: number, version: number) => api.post(`/quotes/${id}/withdraw`, { version }, { schema: quoteDetail })
export const quotePdfUrl = (id: number) => `/api/quotes/${id}/pdf`
export const createQuoteLink = (id: number, amountMinor?: number) =>
  api.post(`/quotes/${id}/payment-links`, amountMinor ? { amountMinor } : {}, { schema: paymentLink })
