// Column helpers every table shares: identity keys, timestamps, optimistic-lock versions.
import { integer, timestamp } from 'drizzle-orm/pg-core'

export const pk = () => integer().primaryKey().generatedAlwaysAsIdentity()
export const createdAt = () => timestamp({ withTimezone: true }).notNull().defaultNow()
export const updatedAt = () => timestamp({ withTimezone: true }).notNull().defaultNow()
/** Optimistic concurrency: every update must name the version it edited. */
export const version = () => integer().notNull().default(0)
