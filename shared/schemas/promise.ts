// Promise dates for sales: the check for a prospective piece, turning it into an order, and an order's forecast.
import { z } from 'zod'
import { id, isoDate, isoDateTime, name, notes, wireInt } from './common'
import { minorAmount, orderDetail, pieceParams } from './order'

const priority = z.number({ error: 'must be 1 to 5' }).int().min(1, 'must be 1 to 5').max(5, 'must be 1 to 5').default(3)

export const promiseCheckInput = z.object({
  routingId: id,
  params: pieceParams.default(pieceParams.parse({})),
  priority,
  wantedDate: isoDate.optional(),
  /** Also simulate the range (P50 / P80 / P95). */
  range: z.boolean().default(false),
  runs: z.number().int().min(50, 'must be at least 50').max(5000, 'must be at most 5000').default(500),
  seed: z
    .number()
    .int()
    .min(0)
    .max(2 ** 31 - 1)
    .default(1),
  /** Return the simulated completions too (for checking the quantiles). */
  sample: z.boolean().default(false),
})
export type PromiseCheckInput = z.infer<typeof promiseCheckInput>

export const promiseAcceptInput = z.object({
  customerId: id,
  title: name,
  routingId: id,
  params: pieceParams.default(pieceParams.parse({})),
  piece: name.optional(),
  promisedDate: isoDate,
  dueDate: isoDate.optional(),
  priority,
  /** The price quoted, in integer minor units of the workshop's currency. */
  priceQuotedMinor: minorAmount.default(0),
  notes,
})
export type PromiseAcceptInput = z.infer<typeof promiseAcceptInput>

// ---- Answers ----

/** An instant and the workshop-local date it falls on. */
export const promiseMoment = z.object({ at: z.string(), date: z.string() })
export type PromiseMoment = z.infer<typeof promiseMoment>

export const promiseCheckResult = z.object({
  now: z.string(),
  timeZone: z.string(),
  /** What the fixed case was measured against. */
  basis: z.enum(['live-plan', 'quick-plan']),
  basisNote: z.string(),
  routing: z.object({ id: wireInt, name: z.string() }),
  operations: z.array(z.object({ key: z.string(), name: z.string(), kind: z.string(), minutes: z.number(), outsideDays: z.number() })),
  fixedPlan: promiseMoment.extend({ feasible: z.boolean() }),
  replanned: promiseMoment.extend({ delayedJobBags: wireInt }),
  wanted: z.object({ date: z.string(), fixedPlanMeets: z.boolean(), replannedMeets: z.boolean() }).nullable(),
  range: z
    .object({
      runs: wireInt,
      seed: wireInt,
      method: z.string(),
      /** The stated default where history is thin (distribution and its σ). */
      assumption: z.string(),
      p50: promiseMoment,
      p80: promiseMoment,
      p95: promiseMoment,
      /** The quantiles in minutes after now, unrounded. */
      quantileMinutes: z.object({ p50: z.number(), p80: z.number(), p95: z.number() }),
      kinds: z.array(
        z.object({ kind: z.string(), source: z.enum(['history', 'log-normal']), samples: wireInt, p10: z.number(), p50: z.number(), p90: z.number() }),
      ),
      sampleMinutes: z.array(z.number()).optional(),
    })
    .nullable(),
  elapsedMs: z.number(),
})
export type PromiseCheckResult = z.infer<typeof promiseCheckResult>

/** Whether taking the order booked its steps into the live plan (where the promise found room), and if not, why. */
export const promiseBooking = z.discriminatedUnion('booked', [
  z.object({ booked: z.literal(true), start: z.string(), end: z.string(), startDate: z.string(), endDate: z.string(), steps: wireInt }),
  z.object({ booked: z.literal(false), reason: z.string() }),
])
export type PromiseBooking = z.infer<typeof promiseBooking>
export const promiseAcceptResult = z.object({
  order: orderDetail,
  booking: promiseBooking,
  /** The confirmation e-mail in the outbox: queued, sent or failed (with the mail server's words). */
  confirmation: z.object({ id: wireInt, status: z.string(), error: z.string().nullable() }),
})
export type PromiseAcceptResult = z.infer<typeof promiseAcceptResult>

export const jobBagForecast = z.object({
  jobBagId: wireInt,
  number: z.string(),
  piece: z.string(),
  status: z.string(),
  expectedCompletion: z.string().nullable(),
  expectedDate: z.string().nullable(),
  state: z.enum(['late', 'at-risk', 'on-time', 'unplanned', 'finished']),
  latenessMinutes: z.number(),
  why: z.string(),
  /** Its steps still to come (not under way) that the live plan has no bar for. */
  stepsOffPlan: wireInt,
})
export type JobBagForecast = z.infer<typeof jobBagForecast>
export const orderForecast = z.object({
  orderId: wireInt,
  number: z.string(),
  status: z.string(),
  due: z.string(),
  promisedDate: z.string().nullable(),
  timeZone: z.string(),
  plan: z.object({ id: wireInt, number: wireInt, publishedAt: z.string().nullable() }).nullable(),
  state: jobBagForecast.shape.state,
  jobBags: z.array(jobBagForecast),
  /** Why the order was not booked into the live plan when it was made (from a quote or a promise), while work of it is still off the plan. */
  notBooked: z.object({ reason: z.string(), at: isoDateTime }).nullable(),
})
export type OrderForecast = z.infer<typeof orderForecast>
