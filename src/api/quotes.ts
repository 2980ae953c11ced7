// Quotes API: the list, one quote with its payment links and payments, drafting, sending, accepting, withdrawing, its PDF and a deposit link.
import type { Page } from '@shared/schemas/common'
import type { PieceParams } from '@shared/schemas/order'
import { api } from './client'
import type { Payment, PaymentLink } from './payments'

export type QuoteStatus = 'drafted' | 'sent' | 'accepted' | 'expired' | 'withdrawn'
export const QUOTE_STATUSES: QuoteStatus[] = ['drafted', 'sent', 'accepted', 'expired', 'withdrawn']

export interface QuoteStone {
  description: string
  count?: number
  carats?: number
}
export interface QuoteDetails {
  templateId?: number
  piece?: string
  params?: PieceParams
  priority?: number
  metal?: string
  stones?: QuoteStone[]
}
/** The promise's confidence as quoted: the P50 / P80 / P95 days and a note. */
export interface QuoteConfidence {
  p50?: string
  p80?: string
  p95?: string
  note?: string
}

export interface Quote {
  id: number
  number: string
  customerId: number
  customerName: string
  customerEmail: string
  orderId: number | null
  orderNumber: string | null
  status: QuoteStatus
  title: string
  description: string
  details: QuoteDetails
  promisedDate: string | null
  confidence: QuoteConfidence | null
  currency: string
  priceMinor: number
  depositMinor: number
  balanceMinor: number
  validUntil: string
  sentAt: string | null
  acceptedAt: string | null
  withdrawnAt: string | null
  createdAt: string
  version: number
  /** Only on one quote and on write answers. */
  links?: PaymentLink[]
  payments?: Payment[]
  paidMinor?: number
}

export interface QuoteInput {
  customerId: number
  orderId?: number | null
  title: string
  description?: string
  details?: QuoteDetails
  promisedDate?: string | null
  confidence?: QuoteConfidence | null
  priceMinor: number
  depositMinor?: number
  validUntil?: string
  currency?: string
}

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
  return api.get<Page<Quote>>(`/quotes${s ? `?${s}` : ''}`)
}
export const getQuote = (id: number) => api.get<Quote>(`/quotes/${id}`)
export const createQuote = (body: QuoteInput) => api.post<Quote>('/quotes', body)
/** What a quote's change may carry (customer, order and currency stay as drafted). */
export type QuoteUpdate = Partial<Omit<QuoteInput, 'customerId' | 'orderId' | 'currency'>> & { version: number }
export const updateQuote = (id: number, body: QuoteUpdate) => api.patch<Quote>(`/quotes/${id}`, body)
export const sendQuote = (id: number, version: number) => api.post<Quote>(`/quotes/${id}/send`, { version })
export const acceptQuote = (id: number, version: number) => api.post<Quote>(`/quotes/${id}/accept`, { version })
export const withdrawQuote = (id: number, version: number) => api.post<Quote>(`/quotes/${id}/withdraw`, { version })
export const quotePdfUrl = (id: number) => `/api/quotes/${id}/pdf`
export const createQuoteLink = (id: number, amountMinor?: number) => api.post<PaymentLink>(`/quotes/${id}/payment-links`, amountMinor ? { amountMinor } : {})
