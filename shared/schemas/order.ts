// Orders and the pieces (job bags) they are made of.
import { z } from 'zod'
import { ORDER_STATUSES } from '../domain/status'
import { id, isoDate, isoDateTime, name, notes, pageOf, pastDateProblem, version, wireInt } from './common'
import { RING_SCALES, ringSizeToIso } from '../domain/ring-size'
import { gramsToMg } from './metal'

export const METALS = ['silver-925', 'gold-9ct', 'gold-14k', 'gold-18ct', 'platinum-950', 'palladium-950', 'brass', 'copper', 'mixed'] as const
/** What each metal is called on screen and on paper (the code above is only stored). */
export const METAL_NAMES: Record<(typeof METALS)[number], string> = {
  'silver-925': 'Sterling silver 925',
  'gold-9ct': '9 ct gold',
  'gold-14k': '14 k gold',
  'gold-18ct': '18 ct gold',
  'platinum-950': 'Platinum 950',
  'palladium-950': 'Palladium 950',
  brass: 'Brass',
  copper: 'Copper',
  mixed: 'Mixed metals',
}
/** The name of a stored metal code; an unknown code is shown as it is. */
export const metalName = (code: string): string => (METAL_NAMES as Record<string, string>)[code] ?? code
/** A ring size as the customer gave it (ISO 8653 mm, US/Canada number or UK/Australia letter); the others are worked out from it. */
export const ringSizeInput = z
  .object({
    scale: z.enum(RING_SCALES, { error: 'must be iso, us or uk' }),
    value: z.string().trim().min(1, 'is required').max(12),
  })
  .refine((r) => ringSizeToIso(r) !== null, { message: 'is not a size in that scale (ISO 36–80 mm, US 0–16, UK A–Z½)', path: ['value'] })
export type RingSizeValue = z.infer<typeof ringSizeInput>
/** An amount in integer minor units of the workshop's currency (pence, cents, yen, fils). */
export const minorAmount = z
  .number({ error: 'must be an amount' })
  .int('must be whole minor units')
  .min(0, 'must be 0 or more')
  .max(10_000_000_000, 'is too large')
export const pieceParams = z.object({
  metal: z.enum(METALS, { error: 'must be one of the listed metals' }).default('silver-925'),
  stoneCount: z.number().int().min(0, 'must not be negative').max(2000, 'must be at most 2000').default(0),
  stoneSizeMm: z.number().min(0, 'must not be negative').max(30, 'must be at most 30 mm').default(0),
  sizeMm: z.number().min(0).max(300, 'must be at most 300 mm').default(0),
  finish: z.string().trim().max(60).default('polished'),
  quantity: z.number().int().min(1, 'must be at least 1').max(500).default(1),
  /** The ring's size, in the scale the customer gave it. */
  ringSize: ringSizeInput.optional(),
  /** A resize: the size the ring was and the size it is to be. */
  resizeFrom: ringSizeInput.optional(),
  resizeTo: ringSizeInput.optional(),
  /** Typical metal in one finished piece (g), for the estimated cost before anything is weighed. */
  metalWeightG: z.number({ error: 'must be a weight in g' }).positive('must be more than 0 g').max(5000, 'must be at most 5000 g').optional(),
  /** Typical cost of one stone (minor units) when the piece has no stone list yet. */
  stoneCostEachMinor: z
    .number({ error: 'must be an amount' })
    .int('must be whole minor units')
    .min(0, 'must not be negative')
    .max(100_000_000, 'is too large')
    .optional(),
})
export const pieceInput = z.object({ routingId: id, piece: name, params: pieceParams.default(pieceParams.parse({})) })
export const orderInput = z.object({
  customerId: id,
  title: name,
  dueDate: isoDate,
  promisedDate: isoDate.nullable().default(null),
  /** 1 = when there is time … 5 = urgent; the planner weighs lateness by it. */
  priority: z.number({ error: 'must be 1 to 5' }).int().min(1, 'must be 1 to 5').max(5, 'must be 1 to 5').default(3),
  /** The price quoted, in integer minor units of the workshop's currency. */
  priceQuotedMinor: minorAmount.default(0),
  notes,
  pieces: z.array(pieceInput).max(50, 'has too many pieces').default([]),
})
export const orderUpdate = z.object({
  title: name.optional(),
  dueDate: isoDate.optional(),
  promisedDate: isoDate.nullable().optional(),
  priority: z.number().int().min(1, 'must be 1 to 5').max(5, 'must be 1 to 5').optional(),
  status: z.enum(ORDER_STATUSES).optional(),
  priceQuotedMinor: minorAmount.optional(),
  notes: z.string().max(2000).optional(),
  /**
   * With the order cancelled: the customer's own pieces handed back to them, each by job bag and alloy with its weight as handed
   * over; a piece the order holds and not listed goes back at the weight held (services/metal/stock.ts handBackCustomersPieces).
   */
  handBack: z
    .array(z.object({ jobBagId: id, alloyId: id, weightG: gramsToMg }))
    .max(50, 'has too many pieces')
    .optional(),
  version,
})
/**
 * What is wrong with an order's dates on the workshop's `today` (YYYY-MM-DD), by field; empty when they will do. A new
 * order is due and promised today or later. A change keeps the dates it does not change (an order may have gone past its
 * due day), so only the dates given in `changed` are checked; pass `before` to say which ones differ from what is stored.
 */
export function orderDateProblems(
  changed: { dueDate?: string; promisedDate?: string | null },
  today: string,
  before?: { dueDate: string; promisedDate: string | null },
): Partial<Record<'dueDate' | 'promisedDate', string>> {
  const out: Partial<Record<'dueDate' | 'promisedDate', string>> = {}
  for (const field of ['dueDate', 'promisedDate'] as const) {
    const value = changed[field]
    if (before && value === before[field]) continue
    const problem = pastDateProblem(value, today)
    if (problem) out[field] = problem
  }
  return out
}
export type PieceParams = z.infer<typeof pieceParams>
export type OrderInput = z.infer<typeof orderInput>
export type OrderUpdate = z.infer<typeof orderUpdate>

// ---- Answers ----

/**
 * When the live plan expects an order still in the workshop to be done, as its forecast reckons it: the live plan re-timed
 * against the calendar, against the end of its due day (the promised day when there is one).
 */
export const orderExpected = z.object({
  /** The workshop's day its last planned step ends; null when none of it is planned. */
  date: isoDate.nullable(),
  /** That finish: after the due day, tight (on it, or less than a working day to spare) or on time; null when none is planned. */
  risk: z.enum(['late', 'at-risk', 'on-time']).nullable(),
  /** Working time late or to spare in the forecast's words ("1 working day 2 h late", "only 3 h to spare"); null when none is planned. */
  margin: z.string().nullable(),
  /** Its steps still to do that the live plan has no bar for: none, some, or all of them (an order without pieces: all). */
  offPlan: z.enum(['none', 'some', 'all']),
  /** Every job bag is finished (the order is not marked ready yet). */
  done: z.boolean(),
  /** Every job bag is cancelled (the order itself is still open): nothing of it is left to plan. */
  cancelled: z.boolean(),
})
export type OrderExpected = z.infer<typeof orderExpected>

export const orderSummary = z.object({
  id: wireInt,
  number: z.string(),
  customerId: wireInt,
  customerName: z.string(),
  title: z.string(),
  dueDate: isoDate,
  promisedDate: isoDate.nullable(),
  priority: wireInt,
  status: z.string(),
  priceQuotedMinor: wireInt,
  currency: z.string(),
  jobBags: wireInt,
  version: wireInt,
  /** On the live plan; null for an order ready, collected or cancelled. */
  expected: orderExpected.nullable(),
})
export const orderSummaryPage = pageOf(orderSummary)
export const orderOperation = z.object({
  id: wireInt,
  jobBagId: wireInt,
  seq: wireInt,
  key: z.string(),
  kindId: wireInt,
  name: z.string(),
  status: z.string(),
  estimateMinutes: z.number(),
  requiredLevel: wireInt,
  waitAfterMinutes: z.number(),
  leadDays: z.number(),
  after: z.array(z.string()),
  plannedBenchId: wireInt.nullable(),
  plannedPersonId: wireInt.nullable(),
  plannedStart: isoDateTime.nullable(),
  plannedEnd: isoDateTime.nullable(),
  finishedAt: isoDateTime.nullable(),
})
/** A piece's parameters as stored (checked like the input, without filling in defaults). */
const storedPieceParams = z.custom<PieceParams>((v) => pieceParams.safeParse(v).success, 'must be piece parameters')
export const orderJobBag = z.object({
  id: wireInt,
  number: z.string(),
  piece: z.string(),
  routingId: wireInt.nullable(),
  params: storedPieceParams,
  status: z.string(),
  operations: z.array(orderOperation),
})
export const orderDetail = z.object({
  id: wireInt,
  number: z.string(),
  customerId: wireInt,
  customerName: z.string(),
  customerReference: z.string(),
  title: z.string(),
  dueDate: isoDate,
  promisedDate: isoDate.nullable(),
  priority: wireInt,
  status: z.enum(ORDER_STATUSES),
  /** Integer minor units of `currency` (the workshop's). */
  priceQuotedMinor: wireInt,
  currency: z.string(),
  notes: z.string(),
  version: wireInt,
  jobBags: z.array(orderJobBag),
})
export type OrderSummary = z.infer<typeof orderSummary>
export type OrderOperation = z.infer<typeof orderOperation>
export type OrderJobBag = z.infer<typeof orderJobBag>
export type OrderDetail = z.infer<typeof orderDetail>
