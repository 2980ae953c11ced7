// Job costing: the estimate request for pieces not yet ordered, and the answer shared by the order dialog, an order's costing and the owner's table.
import { z } from 'zod'
import type { CostBreakdown, Missing } from '../domain/costing'
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

/** One piece at estimate: how each figure was reached. */
export interface PieceEstimate {
  piece: string
  quantity: number
  /** Metal: weight per piece (g), the alloy and its price per gram on the day. */
  metalWeightG: number | null
  alloyName: string | null
  pricePerGramMinor: number | null
  priceOn: string | null
  labourMinutes: number
  cost: CostBreakdown
  missing: Missing[]
}

/** One side (estimate or actual) of a job's costing. Amounts in minor units. */
export interface CostingSide {
  cost: CostBreakdown
  marginMinor: number
  marginPct: number | null
  missing: Missing[]
  /** What the margin leaves out, in words, or that all four are counted. */
  caveat: string
}

export interface CostingEstimate {
  /** The price used (minor units). */
  priceMinor: number
  estimate: CostingSide
  pieces: PieceEstimate[]
  /** The workshop's margin and the price that leaves it on the estimated cost. */
  marginTargetPct: number
  suggestedPriceMinor: number
  currency: string
  /** The day the alloy prices were taken from. */
  pricedOn: string
}

/** An order's costing: the estimate the order was taken on and, once work is recorded, the actual. */
export interface OrderCosting extends CostingEstimate {
  orderId: number
  orderNumber: string
  actual: CostingSide
  /** Grams of the customer's own metal lost in the work (costs the workshop nothing but is shown). */
  customerMetalLossG: number
}
