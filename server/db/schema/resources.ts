// Problem facts for planning: operation kinds, benches (capabilities, downtime), people (skills, leave).
import { boolean, date, index, integer, jsonb, pgTable, primaryKey, real, text, uniqueIndex } from 'drizzle-orm/pg-core'
import type { WorkSpan } from '../../../shared/schemas/common'
import { pk, version, instant } from './common'
import { users, workshops } from './workshop'

export const operationKinds = pgTable(
  'operation_kinds',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    code: text().notNull(),
    name: text().notNull(),
    outside: boolean().notNull().default(false),
    hazards: text().array().notNull().default([]),
    color: text().notNull().default('#7a8ca3'),
    version: version(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.code)],
)

export const benches = pgTable(
  'benches',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    name: text().notNull(),
    kind: text().notNull(),
    capacity: integer().notNull().default(1),
    active: boolean().notNull().default(true),
    notes: text().notNull().default(''),
    version: version(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.name)],
)

export const benchCapabilities = pgTable(
  'bench_capabilities',
  {
    benchId: integer()
      .notNull()
      .references(() => benches.id, { onDelete: 'cascade' }),
    kindId: integer()
      .notNull()
      .references(() => operationKinds.id, { onDelete: 'cascade' }),
  },
  (t) => [primaryKey({ columns: [t.benchId, t.kindId] })],
)

export const benchDowntime = pgTable(
  'bench_downtime',
  {
    id: pk(),
    benchId: integer()
      .notNull()
      .references(() => benches.id, { onDelete: 'cascade' }),
    startsAt: instant().notNull(),
    endsAt: instant().notNull(),
    reason: text().notNull(),
  },
  (t) => [index().on(t.benchId)],
)

export const people = pgTable(
  'people',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    userId: integer().references(() => users.id, { onDelete: 'set null' }),
    name: text().notNull(),
    weekPattern: jsonb().$type<WorkSpan[] | null>(),
    /** What an hour of this person costs, in integer minor units of the workshop's currency. */
    hourlyRateMinor: integer().notNull().default(0),
    active: boolean().notNull().default(true),
    version: version(),
  },
  (t) => [uniqueIndex().on(t.userId), index().on(t.workshopId)],
)

export const personSkills = pgTable(
  'person_skills',
  {
    personId: integer()
      .notNull()
      .references(() => people.id, { onDelete: 'cascade' }),
    kindId: integer()
      .notNull()
      .references(() => operationKinds.id, { onDelete: 'cascade' }),
    level: integer().notNull(),
    speed: real().notNull().default(1),
  },
  (t) => [primaryKey({ columns: [t.personId, t.kindId] })],
)

export const leave = pgTable(
  'leave',
  {
    id: pk(),
    personId: integer()
      .notNull()
      .references(() => people.id, { onDelete: 'cascade' }),
    startsOn: date({ mode: 'string' }).notNull(),
    endsOn: date({ mode: 'string' }).notNull(),
    reason: text().notNull().default('leave'),
  },
  (t) => [index().on(t.personId)],
)
