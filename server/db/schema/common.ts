// Column helpers every table shares: identity keys, timestamps, optimistic-lock versions, the VAT terms a document keeps.
import { boolean, customType, integer, text, timestamp } from 'drizzle-orm/pg-core'

export const pk = () => integer().primaryKey().generatedAlwaysAsIdentity()
export const createdAt = () => timestamp({ withTimezone: true }).notNull().defaultNow()
export const updatedAt = () => timestamp({ withTimezone: true }).notNull().defaultNow()
/** Optimistic concurrency: every update must name the version it edited. */
export const version = () => integer().notNull().default(0)
/**
 * A moment stored as `timestamp with time zone` and read back as ISO 8601 in UTC ("2026-12-10T09:26:00.000Z"), so that
 * every answer, event and comparison carries the one format the board and the engine use (PostgreSQL's own text,
 * "2026-12-10 09:26:00+00", never leaves the data layer). Milliseconds are kept; microseconds are dropped.
 */
export const instant = customType<{ data: string; driverData: string }>({
  dataType: () => 'timestamp with time zone',
  fromDriver: (value) => new Date(value).toISOString(),
})

/**
 * The VAT terms in force when a quote was issued, an order made or a payment recorded (as the workshop's three VAT columns), so
 * its documents say the same whatever the settings become. No defaults: whoever writes the row says which terms it was under.
 */
export const frozenVatTerms = () => ({
  vatRegistered: boolean().notNull(),
  vatNumber: text().notNull(),
  /** Hundredths of a per cent (2000 = 20 %). */
  vatRateBasisPoints: integer().notNull(),
})
