// Estimating records: learned step figures the owner accepted into routings, and outside-work costs for job costing.
import { index, integer, jsonb, pgTable, primaryKey, real, text } from 'drizzle-orm/pg-core'
import { createdAt, pk, updatedAt } from './common'
import { operationKinds } from './resources'
import { operations, routings } from './work'
import { users, workshops } from './workshop'

/** What a learned figure rested on when it was accepted: history size, dates, spread, method. */
export interface EstimateBasis {
  n: number
  from: string | null
  to: string | null
  method: string
  spread: Record<string, number>
}

/** Each accepted change of a routing step's minutes (from learned actual times), with who accepted it and when. */
export const routingStepChanges = pgTable(
  'routing_step_changes',
  {
    id: pk(),
    workshopId: integer()
      .notNull()
      .references(() => workshops.id, { onDelete: 'cascade' }),
    routingId: integer()
      .notNull()
      .references(() => routings.id, { onDelete: 'cascade' }),
    stepKey: text().notNull(),
    kindId: integer()
      .notNull()
      .references(() => operationKinds.id),
    fromBaseMinutes: real().notNull(),
    fromPerStoneMinutes: real().notNull(),
    toBaseMinutes: real().notNull(),
    toPerStoneMinutes: real().notNull(),
    /** Routing version after the change. */
    routingVersion: integer().notNull(),
    basis: jsonb().$type<EstimateBasis>().notNull(),
    reason: text().notNull().default(''),
    acceptedBy: integer()
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [index().on(t.workshopId, t.routingId)],
)

/**
 * Expected outside-work cost of a routing step (caster, assay office), per unit, keyed by step key:
 * routing edits rewrite step rows, the key survives.
 */
export const routingStepCosts = pgTable(
  'routing_step_costs',
  {
    routingId: integer()
      .notNull()
      .references(() => routings.id, { onDelete: 'cascade' }),
    stepKey: text().notNull(),
    outsideCostMinor: integer(),
    updatedAt: updatedAt(),
  },
  (t) => [primaryKey({ columns: [t.routingId, t.stepKey] })],
)

/** The outside cost actually invoiced for one operation (null = not known yet: the routing's figure stands in). */
export const operationCosts = pgTable('operation_costs', {
  operationId: integer()
    .primaryKey()
    .references(() => operations.id, { onDelete: 'cascade' }),
  outsideCostMinor: integer(),
  updatedAt: updatedAt(),
})
