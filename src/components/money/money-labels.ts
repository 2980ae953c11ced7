// Words and tag colours for quote states, payment methods and purposes, and a payment link's state.
import type { QuoteStatus } from '@/api/quotes'
import type { PaymentLink, PaymentMethod, PaymentPurpose } from '@/api/payments'

type TagType = 'primary' | 'success' | 'warning' | 'danger' | 'info'

export const QUOTE_STATUS_LABELS: Record<QuoteStatus, string> = {
  drafted: 'Being written',
  sent: 'With the customer',
  accepted: 'Agreed',
  expired: 'Lapsed',
  withdrawn: 'Taken back',
}
export const QUOTE_STATUS_TAGS: Record<QuoteStatus, TagType> = {
  drafted: 'info',
  sent: 'primary',
  accepted: 'success',
  expired: 'warning',
  withdrawn: 'danger',
}
export const METHOD_LABELS: Record<PaymentMethod, string> = { card: 'Card (online)', cash: 'Cash', 'bank-transfer': 'Bank transfer' }
export const PURPOSE_LABELS: Record<PaymentPurpose, string> = { deposit: 'Deposit', balance: 'Balance', refund: 'Refund', other: 'Other' }
export const LINK_STATUS_LABELS: Record<PaymentLink['status'], string> = { open: 'waiting for payment', paid: 'paid', expired: 'no longer valid' }
