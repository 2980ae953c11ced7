// Outbox API: the messages the workshop sent, one with its text and HTML, and sending the at-risk digest now.
import { atRiskDigestSent, outboxMessage, outboxPage } from '@shared/schemas/mail'
import { api } from './client'

export type { OutboxItem, OutboxMessage, OutboxStatus } from '@shared/schemas/mail'

export const listOutbox = (p: { page?: number; pageSize?: number; kind?: string; orderId?: number } = {}) =>
  api.get('/outbox', { query: { ...p }, schema: outboxPage })
export const getOutboxMessage = (id: number) => api.get(`/outbox/${id}`, { schema: outboxMessage })
export const sendAtRiskDigest = () => api.post('/mail/at-risk-digest', undefined, { schema: atRiskDigestSent })
