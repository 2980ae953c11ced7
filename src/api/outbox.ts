// Outbox API: the messages the workshop sent, one with its text and HTML, and sending the at-risk digest now.
import type { Page } from '@shared/schemas/common'
import { api } from './client'

export type OutboxStatus = 'queued' | 'sent' | 'delivered' | 'failed'
export interface OutboxItem {
  id: number
  to: string
  subject: string
  kind: string
  orderId: number | null
  orderNumber: string | null
  status: OutboxStatus
  error: string | null
  createdAt: string
  sentAt: string | null
}
export interface OutboxMessage extends Omit<OutboxItem, 'orderNumber'> {
  text: string
  html: string
  meta: Record<string, unknown>
}

export const listOutbox = (p: { page?: number; pageSize?: number; kind?: string; orderId?: number } = {}) =>
  api.get<Page<OutboxItem>>('/outbox', { query: { ...p } })
export const getOutboxMessage = (id: number) => api.get<OutboxMessage>(`/outbox/${id}`)
export const sendAtRiskDigest = () => api.post<{ day: string; jobs: unknown[]; messages: { id: number; status: string }[] }>('/mail/at-risk-digest')
