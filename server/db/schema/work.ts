// The work itself: customers, orders, routings, job bags, operations, time records, plan versions.
import { boolean, date, index, integer, jsonb, pgTable, real, text, uniqueIndex } from 'drizzle-orm/pg-core'
import type { PieceParams } from '../../../shared/schemas/order'
import type { QuotedStone } from '../../../shared/schemas/quote'
import type { RoutingKind } from '../../../shared/domain/routing-kinds'
import { createdAt, frozenVatTerms, pk, updatedAt, version, instant } from './common'
import { benches, operationKinds, people } from './resources'
import { users, workshops } from './workshop'

export const customers = pgTable(
  'customers',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    reference: text().notNull(),
    name: text().notNull(),
    email: text().notNull().default(''),
    phone: text().notNull().default(''),
    notes: text().notNull().default(''),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.reference)],
)

export const routings = pgTable(
  'routings',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    code: text().notNull(),
    name: text().notNull(),
    description: text().notNull().default(''),
    /** What the routing makes: a new piece, a repair of the customer's own piece, or a production run (shared/domain/routing-kinds.ts). */
    kind: text().$type<RoutingKind>().notNull().default('piece'),
    /** Production runs: the learning rate per doubling of quantity (0.8 = an 80 % curve); null = every unit takes the same time. */
    learningRate: real(),
    /** A ring resize: an order on it records the size the ring is and the size it is to be. */
    resizesRing: boolean().notNull().default(false),
    version: version(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.code)],
)

export const routingSteps = pgTable(
  'routing_steps',
  {
    id: pk(),
    routingId: integer()
      .notNull()
      .references(() => routings.id, { onDelete: 'cascade' }),
    seq: integer().notNull(),
    key: text().notNull(),
    kindId: integer()
      .notNull()
      .references(() => operationKinds.id),
    name: text().notNull(),
    baseMinutes: real().notNull(),
    perStoneMinutes: real().notNull().default(0),
    /** Minutes per millimetre of piece size (0 where size does not matter). */
    perMmMinutes: real().notNull().default(0),
    /** Factor on the per-stone minutes by stone size band (melee / small / large); a band not given counts 1. */
    sizeBandFactors: jsonb().$type<Partial<Record<'melee' | 'small' | 'large', number>>>().notNull().default({}),
    /** Factor on the per-stone minutes by the stone's role on a stone list (centre / side / halo / pave); a role not given takes the usual factor (shared/domain/stones.ts). */
    roleFactors: jsonb().$type<Partial<Record<'centre' | 'side' | 'halo' | 'pave', number>>>().notNull().default({}),
    requiredLevel: integer().notNull().default(1),
    waitAfterMinutes: integer().notNull().default(0),
    leadDays: integer().notNull().default(0),
    after: text().array().notNull().default([]),
  },
  (t) => [uniqueIndex().on(t.routingId, t.key)],
)

export const orders = pgTable(
  'orders',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    number: text().notNull(),
    customerId: integer()
      .notNull()
      .references(() => customers.id),
    title: text().notNull(),
    dueDate: date({ mode: 'string' }).notNull(),
    promisedDate: date({ mode: 'string' }),
    priority: integer().notNull().default(3),
    status: text().notNull().default('open'),
    /** The price quoted, in integer minor units of the workshop's currency. */
    priceQuotedMinor: integer().notNull().default(0),
    /** The VAT terms it was made under (from a quote: the quote's), which its money and the customer's e-mails say. */
    ...frozenVatTerms(),
    /**
     * The deposit asked, in % of the price, as the workshop's default stood when the order was taken (an order priced by a quote
     * asks the quote's deposit instead), so changing the default later never changes what an order already taken asks.
     */
    depositPct: integer(),
    notes: text().notNull().default(''),
    version: version(),
    createdAt: createdAt(),
    updatedAt: updatedAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.number), index().on(t.customerId)],
)

export const jobBags = pgTable(
  'job_bags',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    orderId: integer()
      .notNull()
      .references(() => orders.id, { onDelete: 'cascade' }),
    number: text().notNull(),
    piece: text().notNull(),
    routingId: integer().references(() => routings.id, { onDelete: 'set null' }),
    /** The routing's kind when the bag was made: what the work is (a repair works on the customer's own piece) stays as it was
     *  taken in, whatever later happens to the routing (its kind changed, or the routing removed). */
    routingKind: text().$type<RoutingKind>().notNull().default('piece'),
    params: jsonb().$type<PieceParams>().notNull(),
    /** A piece made from a quote: the quote's stone rows with their counts and what one stone costs, which its estimate counts
     *  until the piece has a stone list of its own; null for a piece taken without a quote (or quoted without counted stones). */
    quotedStones: jsonb().$type<QuotedStone[]>(),
    status: text().notNull().default('waiting'),
    releaseAt: instant(),
    version: version(),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.number), index().on(t.orderId)],
)

export const operations = pgTable(
  'operations',
  {
    id: pk(),
    jobBagId: integer()
      .notNull()
      .references(() => jobBags.id, { onDelete: 'cascade' }),
    seq: integer().notNull(),
    key: text().notNull(),
    kindId: integer()
      .notNull()
      .references(() => operationKinds.id),
    name: text().notNull(),
    status: text().notNull().default('pending'),
    estimateMinutes: real().notNull(),
    estimateSource: text().notNull().default('routing'),
    requiredLevel: integer().notNull().default(1),
    waitAfterMinutes: integer().notNull().default(0),
    leadDays: integer().notNull().default(0),
    after: text().array().notNull().default([]),
    plannedBenchId: integer().references(() => benches.id, { onDelete: 'set null' }),
    plannedPersonId: integer().references(() => people.id, { onDelete: 'set null' }),
    plannedStart: instant(),
    plannedEnd: instant(),
    pinned: boolean().notNull().default(false),
    claimedBy: integer().references(() => people.id, { onDelete: 'set null' }),
    finishedAt: instant(),
    version: version(),
  },
  (t) => [uniqueIndex().on(t.jobBagId, t.key), index().on(t.status)],
)

export const timeRecords = pgTable(
  'time_records',
  {
    id: pk(),
    operationId: integer()
      .notNull()
      .references(() => operations.id, { onDelete: 'cascade' }),
    personId: integer()
      .notNull()
      .references(() => people.id),
    benchId: integer().references(() => benches.id, { onDelete: 'set null' }),
    startedAt: instant().notNull(),
    endedAt: instant(),
    endReason: text(),
    note: text().notNull().default(''),
    /** Client-generated id: a replayed request finds its earlier record instead of writing a second. */
    clientId: text(),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.operationId), index().on(t.personId), uniqueIndex().on(t.clientId)],
)

export const planVersions = pgTable(
  'plan_versions',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    number: integer().notNull(),
    status: text().notNull().default('draft'),
    createdBy: integer().references(() => users.id),
    createdAt: createdAt(),
    publishedBy: integer().references(() => users.id),
    publishedAt: instant(),
    score: jsonb().$type<Record<string, unknown>>().notNull().default({}),
    /** operationId → { benchId, personId, start, end, reason } at the time of the plan. */
    assignments: jsonb().$type<Record<string, unknown>>().notNull().default({}),
  },
  (t) => [uniqueIndex().on(t.workshopId, t.number)],
)
