// The workshop, its calendar (weekly hours, closures), users and the audit log.
import { boolean, date, index, integer, jsonb, pgTable, real, text, uniqueIndex } from 'drizzle-orm/pg-core'
import type { WorkSpan } from '../../../shared/schemas/common'
import { createdAt, pk, updatedAt, version } from './common'
import { timestamp } from 'drizzle-orm/pg-core'

export const workshops = pgTable('workshops', {
  id: pk(),
  name: text().notNull(),
  timeZone: text().notNull().default('Europe/London'),
  weekPattern: jsonb().$type<WorkSpan[]>().notNull(),
  planningLoad: real().notNull().default(0.85),
  /** What the customer's e-mails carry: postal address (lines), phone, reply address, and the currency prices are in (ISO 4217). */
  address: text().notNull().default(''),
  phone: text().notNull().default(''),
  contactEmail: text().notNull().default(''),
  currency: text().notNull().default('GBP'),
  /** The address tablets on the workshop network reach the app at (what a ticket's QR code opens); '' = the address the request came in on. */
  publicUrl: text().notNull().default(''),
  /** Quotes: the deposit asked by default (% of the price), how many days a quote stays valid, and whether metal-heavy work waits for the deposit. */
  depositPct: integer().notNull().default(30),
  quoteValidDays: integer().notNull().default(30),
  noMetalBeforeDeposit: boolean().notNull().default(false),
  /**
   * VAT: whether the workshop is registered, its VAT number as printed on its documents, and the rate in hundredths of a per
   * cent (2000 = 20 %). Prices are what the customer pays, VAT included; documents show the VAT in them.
   */
  vatRegistered: boolean().notNull().default(false),
  vatNumber: text().notNull().default(''),
  vatRateBasisPoints: integer().notNull().default(2000),
  version: version(),
  createdAt: createdAt(),
})

export const closures = pgTable(
  'closures',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    name: text().notNull(),
    startsOn: date({ mode: 'string' }).notNull(),
    endsOn: date({ mode: 'string' }).notNull(),
  },
  (t) => [index().on(t.workshopId)],
)

export const users = pgTable(
  'users',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    email: text().notNull(),
    name: text().notNull(),
    role: text().$type<'owner' | 'manager' | 'bench' | 'sales'>().notNull(),
    passwordHash: text().notNull(),
    active: boolean().notNull().default(true),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [uniqueIndex().on(t.email)],
)

export const auditLog = pgTable(
  'audit_log',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    userId: integer().references(() => users.id),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
    action: text().notNull(),
    entity: text().notNull(),
    entityId: integer(),
    details: jsonb().$type<Record<string, unknown>>().notNull().default({}),
  },
  // By time for the workshop's log; by the row it concerns for one order's, job bag's or operation's history (newest first by id).
  (t) => [index().on(t.workshopId, t.at), index().on(t.entity, t.entityId, t.id)],
)
