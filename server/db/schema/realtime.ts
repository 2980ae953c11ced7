// Change events numbered by the database (catch-up works on whichever app instance a client lands), and the
// Socket.IO PostgreSQL adapter's table for messages too large for a NOTIFY.
import { bigserial, customType, index, integer, jsonb, pgTable, text, timestamp } from 'drizzle-orm/pg-core'
import { workshops } from './workshop'

/** One row per recorded event (never the live-only progress ones); only a bounded recent history is kept. */
export const realtimeEvents = pgTable(
  'realtime_events',
  {
    seq: bigserial({ mode: 'number' }).primaryKey(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    event: text().notNull(),
    payload: jsonb().$type<Record<string, unknown>>().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index().on(t.workshopId, t.seq)],
)

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' })

/** Written and read by @socket.io/postgres-adapter only (its own column names and types). */
export const socketIoAttachments = pgTable('socket_io_attachments', {
  id: bigserial({ mode: 'number' }).unique(),
  createdAt: timestamp({ withTimezone: true }).defaultNow(),
  payload: bytea(),
})
