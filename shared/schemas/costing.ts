// Job costing: the estimate request for pieces not yet ordered, and the answer shared by the order dialog, an order's costing and the owner's table.
import { z } from 'zod'
import { MISSING_WORDS, type CostBreakdown, type Missing } from '../domain/costing'
import { wireInt } from './common'
import { minorAmount, pieceInput } from './order'

export const estimateStoneLine = z.object({
  count: z.number({ error: 'must be a number of stones' }).int('must be whole stones').min(1, 'must be at least 1').max(2000, 'must be at most 2000'),
  costEachMinor: z
    .number({ error: 'must be an amount' })
    .int('must be whole minor units')
    .min(0, 'must not be negative')
    .max(100_000_000, 'is too large')
    .nullable()
    .default(null),
  customerOwned: z.boolean().default(false),
})
export const estimatePiece = pieceInput.extend({ stones: z.array(estimateStoneLine).max(50, 'has too many lines').optional() })
export const costingEstimateInput = z.object({
  pieces: z.array(estimatePiece).min(1, 'needs at least one piece').max(50, 'has too many pieces'),
  /** The price being quoted (integer minor units of the workshop's currency), to show the margin it leaves. */
  priceQuotedMinor: minorAmount.default(0),
})
export type CostingEstimateInput = z.infer<typeof costingEstimateInput>

// ---- Answers ----

const missing = z.enum(Object.keys(MISSING_WORDS) as [Missing, ...Missing[]])
/** Amounts in minor units: metal, stones, outside work, labour and their total. */
export const costBreakdown = z.object({
  metalMinor: wireInt,
  stonesMinor: wireInt,
  outsideMinor: wireInt,
  labourMinor: wireInt,
  totalMinor: wireInt,
}) satisfies z.ZodType<CostBreakdown>

/** One piece at estimate: how each figure was reached. */
export const pieceEstimate = z.object({
  piece: z.string(),
  quantity: wireInt,
  /** Metal: weight per piece (g), the alloy and its price per gram on the day. */
  metalWeightG: z.number().nullable(),
  alloyName: z.string().nullable(),
  pricePerGramMinor: wireInt.nullable(),
  priceOn: z.string().nullable(),
  labourMinutes: z.number(),
  /**
   * The work is on the customer's own piece (a repair: shared/domain/metal.ts worksOnCustomersPiece): `metalWeightG` is then the metal
   * the workshop adds, charged; their piece is not charged.
   */
  customersPiece: z.boolean(),
  /** For such a piece, how its metal was counted, in words ("customer’s own piece: not charged; metal added 0.4 g"); else null. */
  metalNote: z.string().nullable(),
  cost: costBreakdown,
  missing: z.array(missing),
})
export type PieceEstimate = z.infer<typeof pieceEstimate>

/** One side (estimate or actual) of a job's costing. Amounts in minor units. */
export const costingSide = z.object({
  cost: costBreakdown,
  marginMinor: wireInt,
  marginPct: z.number().nullable(),
  missing: z.array(missing),
  /** What the margin leaves out, in words, or that all four are counted. */
  caveat: z.string(),
})
export type CostingSide = z.infer<typeof costingSide>

export const costingEstimate = z.object({
  /** The price used (minor units). */
  priceMinor: wireInt,
  estimate: costingSide,
  pieces: z.array(pieceEstimate),
  /** The workshop's margin and the price that leaves it on the estimated cost. */
  marginTargetPct: z.number(),
  suggestedPriceMinor: wireInt,
  currency: z.string(),
  /** The day the alloy prices were taken from. */
  pricedOn: z.string(),
  /** With a piece on the customer's own piece: that the loss of their metal is not in the estimate (shared/domain/costing.ts); else null. */
  customersMetalCaveat: z.string().nullable(),
})
export type CostingEstimate = z.infer<typeof costingEstimate>

/** An order's costing: the estimate the order was taken on and, once work is recorded, the actual. */
export const orderCosting = costingEstimate.extend({
  orderId: wireInt,
  orderNumber: z.string(),
  actual: costingSide,
  /**
   * Of the actual metal, the part counted as estimated (minor units): pieces in precious metal with nothing weighed count their
   * estimated metal, never nothing; 0 when every such piece was weighed.
   */
  metalAsEstimatedMinor: wireInt,
  /** Grams of the customer's own metal lost in the work (costs the workshop nothing but is shown). */
  customerMetalLossG: z.number(),
  /**
   * Whether anything the actual side counts has been recorded: a step finished, metal issued or returned, stones counted. Until then
   * the actual side is only the estimate's metal and stones standing in.
   */
  workRecorded: z.boolean(),
})
export type OrderCosting = z.infer<typeof orderCosting>
