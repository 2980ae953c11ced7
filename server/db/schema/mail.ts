// E-mail outbox: every message the workshop sends, with its delivery state.
import { index, integer, jsonb, pgTable, text } from 'drizzle-orm/pg-core'
import { OUTBOX_STATUSES } from '../../../shared/schemas/mail'
import { createdAt, pk, instant } from './common'
import { orders } from './work'
import { workshops } from './workshop'

export { OUTBOX_STATUSES }
export type OutboxStatus = (typeof OUTBOX_STATUSES)[number]

/** One row per message: written before sending (queued), then sent / delivered (local test mailbox) / failed with the error. */
export const outbox = pgTable(
  'outbox',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    to: text().notNull(),
    subject: text().notNull(),
    text: text().notNull(),
    html: text().notNull().default(''),
    /** promise-confirmation | ready-for-collection | at-risk-digest | … */
    kind: text().notNull(),
    orderId: integer().references(() => orders.id, { onDelete: 'set null' }),
    status: text().$type<OutboxStatus>().notNull().default('queued'),
    error: text(),
    /** Extra facts of the message (e.g. the job bags a digest listed). */
    meta: jsonb().$type<Record<string, unknown>>().notNull().default({}),
    createdAt: createdAt(),
    sentAt: instant(),
  },
  (t) => [index().on(t.workshopId, t.createdAt), index().on(t.orderId)],
)
