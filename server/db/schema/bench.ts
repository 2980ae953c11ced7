// Bench floor records: replay-safe transition requests, time record corrections, estimate changes with their reasons, the workshop's pause reasons.
import { boolean, index, integer, jsonb, pgTable, real, text, uniqueIndex } from 'drizzle-orm/pg-core'
import { createdAt, pk, version, instant } from './common'
import { operations, timeRecords } from './work'
import { users, workshops } from './workshop'

/** One row per client-generated request id: a replayed transition returns the stored first answer. */
export const benchRequests = pgTable(
  'bench_requests',
  {
    requestId: text().primaryKey(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    userId: integer()
      .notNull()
      .references(() => users.id),
    action: text().notNull(),
    operationId: integer().references(() => operations.id, { onDelete: 'cascade' }),
    /** HTTP status of the first answer (0 while it is being worked on). */
    status: integer().notNull().default(0),
    response: jsonb().$type<Record<string, unknown>>().notNull().default({}),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.workshopId, t.createdAt)],
)

/**
 * A manager's correction of a time record, never overwriting it: the newest correction of a record holds its
 * effective start and end ('change'), removes it from the actual minutes ('void'), or vouches for a record added afterwards ('add').
 */
export const timeRecordCorrections = pgTable(
  'time_record_corrections',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    timeRecordId: integer()
      .notNull()
      .references(() => timeRecords.id, { onDelete: 'cascade' }),
    kind: text().$type<'change' | 'void' | 'add'>().notNull(),
    startedAt: instant(),
    endedAt: instant(),
    previousStartedAt: instant(),
    previousEndedAt: instant(),
    reason: text().notNull(),
    correctedBy: integer()
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.timeRecordId)],
)

/** Each change of an operation's estimate, with who changed it and why. */
export const estimateChanges = pgTable(
  'estimate_changes',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    operationId: integer()
      .notNull()
      .references(() => operations.id, { onDelete: 'cascade' }),
    fromMinutes: real().notNull(),
    toMinutes: real().notNull(),
    fromSource: text().notNull(),
    reason: text().notNull(),
    changedBy: integer()
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.operationId)],
)

/**
 * The workshop's own reasons for pausing work (break, waiting for stones…). Time records keep the code; a reason is
 * switched off rather than deleted, so past records keep their name.
 */
export const pauseReasons = pgTable(
  'pause_reasons',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    code: text().notNull(),
    label: text().notNull(),
    needsNote: boolean().notNull().default(false),
    active: boolean().notNull().default(true),
    sort: integer().notNull().default(0),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.code)],
)
