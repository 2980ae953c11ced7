// Job bags: one piece of an order with its routing (operations), planned vs actual minutes, history and status.
import { z } from 'zod'
import { id, isoDate, isoDateTime, name, version, wireInt } from './common'
import { ringSizeInput } from './order'
import { gramsToMg } from './metal'
import { benchOperation } from './bench-floor'

const reason = z.string({ error: 'is required' }).trim().min(3, 'say why (at least 3 characters)').max(500, 'must be at most 500 characters')
const minutes = z.number({ error: 'must be a number of minutes' }).min(0, 'must not be negative').max(100_000, 'must be at most 100000 minutes')
const stepKey = z
  .string()
  .trim()
  .min(1)
  .max(40)
  .regex(/^[a-z0-9][a-z0-9-]*$/, 'use lower-case letters, digits and dashes')

export const stepAdd = z.object({
  kindId: id,
  name,
  key: stepKey.optional(),
  estimateMinutes: minutes,
  requiredLevel: z.number().int().min(1, 'must be 1, 2 or 3').max(3, 'must be 1, 2 or 3').default(1),
  waitAfterMinutes: z.number().int().min(0).max(10_000).default(0),
  leadDays: z.number().int().min(0).max(60).default(0),
  /** Keys of the steps that must be finished first. */
  after: z.array(stepKey).max(20).default([]),
  /** Steps that must now wait for this one (keys). */
  before: z.array(stepKey).max(20).default([]),
  reason,
  version,
})
export const stepUpdate = z
  .object({
    name: name.optional(),
    estimateMinutes: minutes.optional(),
    requiredLevel: z.number().int().min(1, 'must be 1, 2 or 3').max(3, 'must be 1, 2 or 3').optional(),
    after: z.array(stepKey).max(20).optional(),
    /** Required when the estimate changes: kept with the change. */
    reason: reason.optional(),
    version,
  })
  .refine((s) => s.estimateMinutes === undefined || s.reason, { message: 'say why the estimate changes', path: ['reason'] })
export const stepSkip = z.object({ reason, version })
export const sequenceInput = z.object({ operationIds: z.array(id).min(1).max(200), version })
export const jobBagStatusInput = z.object({
  /** on-hold or cancelled by a manager; 'resume' lifts a hold (the status then follows the operations). */
  status: z.enum(['on-hold', 'cancelled', 'resume']),
  reason,
  /**
   * With the bag cancelled: the customer's own piece(s) it holds handed back to them, each by alloy with its weight as handed over;
   * a piece the bag holds and not listed goes back at the weight held (services/metal/stock.ts handBackCustomersPieces). A bag
   * cancelled while the piece was at the bench takes it later, sent again as cancelled.
   */
  handBack: z
    .array(z.object({ alloyId: id, weightG: gramsToMg }))
    .max(20, 'has too many pieces')
    .optional(),
  version,
})
/**
 * A ring size changed after ordering: the ring's size, or a resize's from and to; a field left out stays, null clears it.
 * A resize keeps both sizes (the one it was and the one it is to be).
 */
export const ringSizeChange = z
  .object({
    ringSize: ringSizeInput.nullable().optional(),
    resizeFrom: ringSizeInput.nullable().optional(),
    resizeTo: ringSizeInput.nullable().optional(),
    reason: z.string().trim().max(500, 'must be at most 500 characters').default(''),
    version,
  })
  .refine((c) => c.ringSize !== undefined || c.resizeFrom !== undefined || c.resizeTo !== undefined, {
    message: 'give the ring size, or the resize from and to',
    path: ['ringSize'],
  })
export type RingSizeChange = z.infer<typeof ringSizeChange>
export const ticketQuery = z.object({ size: z.enum(['A5', 'A6']).optional().default('A6') })
export const jobBagListQuery = z.object({ orderId: id.optional(), status: z.string().max(40).optional(), q: z.string().max(120).optional() })

export type StepAdd = z.infer<typeof stepAdd>
export type StepUpdate = z.infer<typeof stepUpdate>
export type StepSkip = z.infer<typeof stepSkip>
export type SequenceInput = z.infer<typeof sequenceInput>
export type JobBagStatusInput = z.infer<typeof jobBagStatusInput>

// ---- Answers ----

export const effectiveTimeRecord = z.object({
  id: wireInt,
  operationId: wireInt,
  personId: wireInt,
  personName: z.string(),
  benchId: wireInt.nullable(),
  startedAt: isoDateTime,
  endedAt: isoDateTime.nullable(),
  endReason: z.string().nullable(),
  note: z.string(),
  minutes: z.number(),
  voided: z.boolean(),
  /** Recorded start/end before any correction. */
  recordedStartedAt: isoDateTime,
  recordedEndedAt: isoDateTime.nullable(),
  corrections: z.array(
    z.object({
      id: wireInt,
      kind: z.string(),
      startedAt: isoDateTime.nullable(),
      endedAt: isoDateTime.nullable(),
      reason: z.string(),
      by: z.string(),
      at: isoDateTime,
    }),
  ),
})

export const jobBagOperation = benchOperation.extend({
  after: z.array(z.string()),
  estimateSource: z.string(),
  waitAfterMinutes: z.number(),
  leadDays: z.number(),
  outside: z.boolean(),
  plannedBenchId: wireInt.nullable(),
  plannedPersonId: wireInt.nullable(),
  finishedAt: isoDateTime.nullable(),
  /** Keys of predecessors not finished yet. */
  waitingFor: z.array(z.string()),
  estimateChanges: z.array(z.object({ fromMinutes: z.number(), toMinutes: z.number(), reason: z.string(), by: z.string(), at: isoDateTime })),
})

export const historyEntry = z.object({
  at: isoDateTime,
  kind: z.enum(['audit', 'time']),
  action: z.string(),
  operationId: wireInt.nullable(),
  who: z.string(),
  details: z.record(z.string(), z.unknown()),
})

/** Reading one job bag: the bench the one looking works at (chosen on the bench screen), to say whether they could take its next step there. */
export const jobBagQuery = z.object({ benchId: id.optional() })

export const jobBagDetail = z.object({
  id: wireInt,
  number: z.string(),
  piece: z.string(),
  status: z.string(),
  version: wireInt,
  params: z.record(z.string(), z.unknown()),
  order: z.object({
    id: wireInt,
    number: z.string(),
    title: z.string(),
    dueDate: isoDate,
    promisedDate: isoDate.nullable(),
    priority: wireInt,
    status: z.string(),
    customerReference: z.string(),
    /** The customer's name, as the office knows them (no contact data); null for bench users, who know a piece by the code, as its ticket does. */
    customerName: z.string().nullable(),
  }),
  operations: z.array(jobBagOperation),
  timeRecords: z.array(effectiveTimeRecord),
  history: z.array(historyEntry),
  plannedMinutes: z.number(),
  actualMinutes: z.number(),
  /** The operation a person would take up next (first ready, else first held). */
  nextOperationId: wireInt.nullable(),
  /**
   * Why the one looking cannot take up the next step (a ready one) — skill level, a bench not equipped for it, a wait still
   * running, a deposit not in… — in the words a claim would be refused with; null when they can, or when no one is named yet.
   */
  nextStepRefusal: z.string().nullable(),
})

/** One row of the job bag list. */
export const jobBagSummary = z.object({
  id: wireInt,
  number: z.string(),
  piece: z.string(),
  status: z.string(),
  version: wireInt,
  orderId: wireInt,
  orderNumber: z.string(),
  dueDate: isoDate,
  priority: wireInt,
  operations: wireInt,
  finished: wireInt,
})

export type EffectiveTimeRecord = z.infer<typeof effectiveTimeRecord>
export type JobBagOperation = z.infer<typeof jobBagOperation>
export type HistoryEntry = z.infer<typeof historyEntry>
export type JobBagDetail = z.infer<typeof jobBagDetail>
export type JobBagSummary = z.infer<typeof jobBagSummary>
