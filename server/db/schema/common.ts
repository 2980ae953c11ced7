// Column helpers every table shares: identity keys, timestamps, optimistic-lock versions.
import { customType, integer, timestamp } from 'drizzle-orm/pg-core'

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
