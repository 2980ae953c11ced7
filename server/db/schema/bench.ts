// Bench floor records: replay-safe transition requests, time record corrections, estimate changes with their reasons.
import { index, integer, jsonb, pgTable, real, text, timestamp } from 'drizzle-orm/pg-core'
import { createdAt, pk } from './common'
import { operations, timeRecords } from './work'
import { users, workshops } from './workshop'

/** One row per client-generated request id: a replayed transition returns the stored first answer. */
export const benchRequests = pgTable('bench_requests', {
  requestId: text().primaryKey(),
  workshopId: integer().notNull().references(() => workshops.id, { onDelete: 'cascade' }),
  userId: integer().notNull().references(() => users.id),
  action: text().notNull(),
  operationId: integer().references(() => operations.id, { onDelete: 'cascade' }),
  /** HTTP status of the first answer (0 while it is being worked on). */
  status: integer().notNull().default(0),
  response: jsonb().$type<Record<string, unknown>>().notNull().default({}),
  createdAt: createdAt(),
}, (t) => [index().on(t.workshopId, t.createdAt)])

/**
 * A manager's correction of a time record, never overwriting it: the newest correction of a record holds its
 * effective start and end ('change'), removes it from the actual minutes ('void'), or vouches for a record added afterwards ('add').
 */
export const timeRecordCorrections = pgTable('time_record_corrections', {
  id: pk(),
  workshopId: integer().notNull().references(() => workshops.id, { onDelete: 'cascade' }),
  timeRecordId: integer().notNull().references(() => timeRecords.id, { onDelete: 'cascade' }),
  kind: text().$type<'change' | 'void' | 'add'>().notNull(),
  startedAt: timestamp({ withTimezone: true, mode: 'string' }),
  endedAt: timestamp({ withTimezone: true, mode: 'string' }),
  previousStartedAt: timestamp({ withTimezone: true, mode: 'string' }),
  previousEndedAt: timestamp({ withTimezone: true, mode: 'string' }),
  reason: text().notNull(),
  correctedBy: integer().notNull().references(() => users.id),
  createdAt: createdAt(),
}, (t) => [index().on(t.timeRecordId)])

/** Each change of an operation's estimate, with who changed it and why. */
export const estimateChanges = pgTable('estimate_changes', {
  id: pk(),
  workshopId: integer().notNull().references(() => workshops.id, { onDelete: 'cascade' }),
  operationId: integer().notNull().references(() => operations.id, { onDelete: 'cascade' }),
  fromMinutes: real().notNull(),
  toMinutes: real().notNull(),
  fromSource: text().notNull(),
  reason: text().notNull(),
  changedBy: integer().notNull().references(() => users.id),
  createdAt: createdAt(),
}, (t) => [index().on(t.operationId)])
