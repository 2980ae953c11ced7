// The outbox as the API answers it (what the workshop sent, one message with its text) and the at-risk digest sent now.
import { z } from 'zod'
import { pageOf, wireInt } from './common'

/** Where a message stands: written (queued), handed to the mail server (sent), seen in the local test mailbox (delivered), refused (failed). */
export const OUTBOX_STATUSES = ['queued', 'sent', 'delivered', 'failed'] as const
export const outboxStatus = z.enum(OUTBOX_STATUSES)
export type OutboxStatus = z.infer<typeof outboxStatus>

// ---- Answers ----

export const outboxItem = z.object({
  id: wireInt,
  to: z.string(),
  subject: z.string(),
  kind: z.string(),
  orderId: wireInt.nullable(),
  orderNumber: z.string().nullable(),
  status: outboxStatus,
  error: z.string().nullable(),
  createdAt: z.string(),
  sentAt: z.string().nullable(),
})
export type OutboxItem = z.infer<typeof outboxItem>
export const outboxPage = pageOf(outboxItem)
export const outboxMessage = outboxItem.omit({ orderNumber: true }).extend({
  workshopId: wireInt,
  text: z.string(),
  html: z.string(),
  /** Extra facts of the message (e.g. the job bags a digest listed). */
  meta: z.record(z.string(), z.unknown()),
})
export type OutboxMessage = z.infer<typeof outboxMessage>

/** One job bag in the digest: due date, expected end in the workshop's local time (null when not planned), late or at risk. */
export const digestLine = z.object({
  number: z.string(),
  piece: z.string(),
  orderNumber: z.string(),
  due: z.string(),
  expected: z.string().nullable(),
  state: z.string(),
  reason: z.string().nullable(),
  /** Not in the digest before this one. */
  isNew: z.boolean(),
})
/** A message written for one recipient: queued for sending, or sent or failed at once (with the mail server's words). */
export const mailSent = z.object({ id: wireInt, status: outboxStatus, error: z.string().nullable() })
/** The digest sent now: the day, the job bags it listed and one message per recipient (none when nothing is at risk). */
export const atRiskDigestSent = z.object({ day: z.string(), jobs: z.array(digestLine), messages: z.array(mailSent) })
export type AtRiskDigestSent = z.infer<typeof atRiskDigestSent>
