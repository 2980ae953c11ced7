// Metal: alloys and prices, issues and returns per job bag, corrections, purchases, refining lots, tolerances; bodies, queries and answers.
// Weights travel in grams with up to two decimals and are kept as whole milligrams; money travels and is kept in minor units.
import { z } from 'zod'
import { ALLOY_METALS, LEGAL_FINENESS, isLegalFineness, type AlloyMetal } from '../domain/metal'
import { code, id, isoDate, name, version } from './common'

const twoDecimals = (g: number) => Math.abs(g * 100 - Math.round(g * 100)) < 1e-6
/** A weight in grams: more than 0, at most 2 decimals (0.01 g, the bench scale's step), at most 100 kg. */
export const grams = z
  .number({ error: 'must be a weight in grams' })
  .positive('must be more than 0 g')
  .max(100_000, 'must be at most 100000 g')
  .refine(twoDecimals, 'must have at most 2 decimals (0.01 g)')
/** A signed weight (stock count differences): not 0, at most 2 decimals. */
export const signedGrams = z
  .number({ error: 'must be a weight in grams' })
  .min(-100_000, 'must be at least −100000 g')
  .max(100_000, 'must be at most 100000 g')
  .refine((g) => g !== 0, 'must not be 0')
  .refine(twoDecimals, 'must have at most 2 decimals (0.01 g)')
const reason = z.string().trim().max(500, 'must be at most 500 characters')
const clientId = z.string().trim().min(8, 'must be at least 8 characters').max(80, 'must be at most 80 characters').optional()
const minor = z
  .number({ error: 'must be an amount in minor units' })
  .int('must be a whole number of minor units')
  .min(0, 'must not be negative')
  .max(1_000_000_000, 'is too large')
const metal = z.enum(ALLOY_METALS, { error: `must be one of: ${ALLOY_METALS.join(', ')}` })
const density = z.number({ error: 'must be a density in g/cm³' }).min(1, 'must be at least 1 g/cm³').max(25, 'must be at most 25 g/cm³')
const fineness = z.number({ error: 'must be parts per thousand' }).int('must be a whole number of parts per thousand')
const finenessMessage = (m: AlloyMetal) => `is not a legal standard for ${m} (${LEGAL_FINENESS[m].join(', ')})`

export const alloyInput = z
  .object({
    code,
    name,
    metal,
    fineness,
    densityGPerCm3: density,
    active: z.boolean().default(true),
  })
  .strict()
  .superRefine((a, ctx) => {
    if (!isLegalFineness(a.metal, a.fineness)) ctx.addIssue({ code: 'custom', path: ['fineness'], message: finenessMessage(a.metal) })
  })
export type AlloyInput = z.infer<typeof alloyInput>
export const alloyUpdate = z
  .object({
    version,
    code: code.optional(),
    name: name.optional(),
    metal: metal.optional(),
    fineness: fineness.optional(),
    densityGPerCm3: density.optional(),
    active: z.boolean().optional(),
  })
  .strict()
export type AlloyUpdate = z.infer<typeof alloyUpdate>
export { finenessMessage }

export const alloyPriceInput = z
  .object({
    /** Minor units of the workshop's currency per gram (pence per gram). */
    pricePerGramMinor: minor.refine((n) => n > 0, 'must be more than 0'),
    effectiveOn: isoDate,
  })
  .strict()
export type AlloyPriceInput = z.infer<typeof alloyPriceInput>

export const issueInput = z
  .object({
    clientId,
    jobBagId: id,
    alloyId: id,
    personId: id,
    operationId: id.optional(),
    weightG: grams,
    source: z.enum(['stock', 'customer'], { error: 'must be stock or customer' }).default('stock'),
    reason: reason.default(''),
  })
  .strict()
export type IssueInput = z.infer<typeof issueInput>

export const returnInput = z
  .object({
    clientId,
    jobBagId: id,
    alloyId: id,
    personId: id,
    operationId: id.optional(),
    weightG: grams,
    form: z.enum(['piece', 'scrap', 'lemel'], { error: 'must be piece, scrap or lemel' }),
    /** Needed when the job bag's returns would come to more than was issued. */
    reason: reason.default(''),
  })
  .strict()
export type ReturnInput = z.infer<typeof returnInput>

/** The weight the row should have said (0 voids it), and why. */
export const correctionInput = z
  .object({
    clientId,
    weightG: z
      .number({ error: 'must be a weight in grams' })
      .min(0, 'must not be negative')
      .max(100_000, 'must be at most 100000 g')
      .refine(twoDecimals, 'must have at most 2 decimals (0.01 g)'),
    reason: reason.min(1, 'say why the weight is corrected'),
  })
  .strict()
export type CorrectionInput = z.infer<typeof correctionInput>

export const purchaseInput = z.object({ clientId, alloyId: id, weightG: grams, costMinor: minor.optional(), reason: reason.default('') }).strict()
export type PurchaseInput = z.infer<typeof purchaseInput>
export const adjustmentInput = z.object({ clientId, alloyId: id, weightG: signedGrams, reason: reason.min(1, 'say why the stock is adjusted') }).strict()
export type AdjustmentInput = z.infer<typeof adjustmentInput>

export const movementQuery = z.object({
  jobBagId: id.optional(),
  alloyId: id.optional(),
  refiningLotId: id.optional(),
  personId: id.optional(),
  limit: z.coerce.number().int().min(1).max(1000).default(200),
})
export type MovementQuery = z.infer<typeof movementQuery>

const optionalDate = z.preprocess((v) => (v === '' ? undefined : v), isoDate.optional())
export const LOSS_GROUPINGS = ['person', 'kind', 'month', 'alloy'] as const
export type LossGrouping = (typeof LOSS_GROUPINGS)[number]
export const lossQuery = z
  .object({
    groupBy: z.enum(LOSS_GROUPINGS, { error: 'must be person, kind, month or alloy' }).default('person'),
    from: optionalDate,
    to: optionalDate,
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type LossQuery = z.infer<typeof lossQuery>

/** The tolerance and the version it was read at (0 while the kind still has the usual default). */
export const toleranceInput = z
  .object({
    tolerancePct: z.number({ error: 'must be a percentage' }).min(0, 'must not be negative').max(50, 'must be at most 50 %'),
    version: z.number({ error: 'is required (the version you edited)' }).int('must be a whole number').nonnegative('must not be negative'),
  })
  .strict()
export type ToleranceInput = z.infer<typeof toleranceInput>

export const refiningLotInput = z
  .object({
    number: z.string().trim().min(1, 'is required').max(40, 'must be at most 40 characters').optional(),
    refiner: z.string().trim().max(120, 'must be at most 120 characters').default(''),
    notes: z.string().max(2000, 'must be at most 2000 characters').default(''),
  })
  .strict()
export type RefiningLotInput = z.infer<typeof refiningLotInput>
export const refiningItemInput = z
  .object({
    clientId,
    alloyId: id,
    weightG: grams,
    form: z.enum(['scrap', 'lemel'], { error: 'must be scrap or lemel' }),
  })
  .strict()
export type RefiningItemInput = z.infer<typeof refiningItemInput>
export const refiningSendInput = z.object({ version, refiner: z.string().trim().max(120).optional() }).strict()
export type RefiningSendInput = z.infer<typeof refiningSendInput>
export const refiningSettleInput = z
  .object({
    version,
    creditedFineG: z
      .number({ error: 'must be a weight in grams' })
      .min(0, 'must not be negative')
      .max(100_000)
      .refine((g) => Math.abs(g * 1000 - Math.round(g * 1000)) < 1e-6, 'must have at most 3 decimals (1 mg)')
      .optional(),
    creditedMinor: minor.optional(),
    /** Metal the refiner sent back as an alloy of the workshop's (grain, sheet), which goes into stock. */
    returnedAlloyId: id.optional(),
    returnedWeightG: grams.optional(),
    notes: z.string().max(2000).optional(),
  })
  .strict()
  .refine((s) => s.creditedFineG !== undefined || s.creditedMinor !== undefined || s.returnedWeightG !== undefined, {
    message: 'enter what the refiner credited: fine metal, money or metal returned',
    path: ['creditedFineG'],
  })
  .refine((s) => (s.returnedAlloyId === undefined) === (s.returnedWeightG === undefined), {
    message: 'metal returned needs both its alloy and its weight',
    path: ['returnedWeightG'],
  })
export type RefiningSettleInput = z.infer<typeof refiningSettleInput>

// ---------------------------------------------------------------------------------------------------------------
// Answers (weights in mg and, for display, g; money in minor units)

export interface AlloyPrice {
  id: number
  pricePerGramMinor: number
  effectiveOn: string
  setBy: string | null
  createdAt: string
}
export interface Alloy {
  id: number
  code: string
  name: string
  metal: AlloyMetal
  fineness: number
  densityGPerCm3: number
  active: boolean
  version: number
  /** The price in force today (owner and manager only; null for others or when none is set). */
  pricePerGramMinor: number | null
  priceOn: string | null
}
export type MovementKind = 'bought' | 'issued' | 'returned' | 'to-refining' | 'from-refining' | 'adjusted' | 'delivered'
export interface MetalMovement {
  id: number
  kind: MovementKind
  alloyId: number
  alloyName: string
  weightMg: number
  weightG: number
  source: 'stock' | 'customer' | null
  form: 'piece' | 'scrap' | 'lemel' | null
  jobBagId: number | null
  operationId: number | null
  operationName: string | null
  personId: number | null
  personName: string | null
  refiningLotId: number | null
  costMinor: number | null
  correctsId: number | null
  reason: string
  recordedBy: string | null
  recordedAt: string
  clientId: string | null
  /** For an original row: its weight after every correction; corrections listed with who and why. */
  effectiveMg: number
  corrections: { id: number; weightMg: number; reason: string; recordedBy: string | null; recordedAt: string }[]
}
export interface LossFigures {
  issuedMg: number
  fromCustomerMg: number
  pieceMg: number
  scrapMg: number
  lemelMg: number
  returnedMg: number
  lossMg: number
  lossG: number
  lossPct: number | null
  lossFineMg: number
  lossFineG: number
}
export interface StepAccount extends LossFigures {
  operationId: number | null
  name: string
  kindId: number | null
  kind: string | null
  tolerancePct: number | null
  overTolerance: boolean
}
export interface PersonAccount extends LossFigures {
  personId: number | null
  name: string
}
export interface AlloyAccount extends LossFigures {
  alloyId: number
  name: string
  fineness: number
}
export interface JobBagMetal {
  jobBagId: number
  number: string
  piece: string
  total: LossFigures
  overTolerance: boolean
  byAlloy: AlloyAccount[]
  bySteps: StepAccount[]
  byPerson: PersonAccount[]
  /** The piece's weight (last weighed) and whether hallmarking is compulsory for it; a warning when the routing has no hallmarking step. */
  hallmark: {
    metal: AlloyMetal | null
    pieceG: number | null
    thresholdG: number | null
    needed: boolean
    routingHasHallmarking: boolean
    warning: string | null
  }
  movements: MetalMovement[]
  toleranceNote: string
}
export interface LossRow {
  key: string
  label: string
  n: number
  issuedG: number
  returnedG: number
  lossG: number
  lossPct: number | null
  lossFineG: number
  overTolerance: number
}
export interface LossTable {
  groupBy: LossGrouping
  filter: { from?: string; to?: string }
  rows: LossRow[]
  total: LossRow
  toleranceNote: string
}
export interface StockRow {
  alloyId: number
  code: string
  name: string
  metal: AlloyMetal
  fineness: number
  boughtMg: number
  fromCustomerMg: number
  issuedMg: number
  returnedMg: number
  toRefiningMg: number
  fromRefiningMg: number
  adjustedMg: number
  /** Finished pieces that left with their collected orders (their last weighing back). */
  deliveredMg: number
  /** bought + from customers − issued + returned − to refining + from refining + adjustments. */
  balanceMg: number
  balanceG: number
  fineMg: number
  fineG: number
  pricePerGramMinor: number | null
  priceOn: string | null
  valueMinor: number | null
}
export interface Tolerance {
  kindId: number
  code: string
  name: string
  tolerancePct: number
  isDefault: boolean
  version: number
}
export interface RefiningLot {
  id: number
  number: string
  status: 'open' | 'sent' | 'settled'
  refiner: string
  sentAt: string | null
  settledAt: string | null
  creditedFineMg: number | null
  creditedMinor: number | null
  notes: string
  version: number
  createdAt: string
  sentMg: number
  sentFineMg: number
  /** Credited fine ÷ fine sent, in % (null before settling or with nothing sent). */
  recoveryPct: number | null
  byAlloy: { alloyId: number; name: string; fineness: number; weightMg: number; fineMg: number }[]
  items: MetalMovement[]
}
