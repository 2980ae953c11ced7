// Metal: alloys and prices, issues and returns per job bag, corrections, purchases, refining lots, tolerances; bodies, queries and answers.
// Weights travel in grams with up to two decimals and are kept as whole milligrams; money travels and is kept in minor units.
import { z } from 'zod'
import { ALLOY_METALS, LEGAL_FINENESS, isLegalFineness, type AlloyMetal } from '../domain/metal'
import { code, id, isoDate, name, version, wireInt } from './common'

const twoDecimals = (g: number) => Math.abs(g * 100 - Math.round(g * 100)) < 1e-6
/** A weight in grams: more than 0, at most 2 decimals (0.01 g, the bench scale's step), at most 100 kg. */
export const grams = z
  .number({ error: 'must be a weight in grams' })
  .positive('must be more than 0 g')
  .max(100_000, 'must be at most 100000 g')
  .refine(twoDecimals, 'must have at most 2 decimals (0.01 g)')
/**
 * A weight in grams to the milligram: more than 0, at most 3 decimals, at most 100 kg. For a customer's piece handed back, whose
 * weight is offered as the stock holds it (to the mg) and may be typed as weighed at the counter.
 */
export const gramsToMg = z
  .number({ error: 'must be a weight in grams' })
  .positive('must be more than 0 g')
  .max(100_000, 'must be at most 100000 g')
  .refine((g) => Math.abs(g * 1000 - Math.round(g * 1000)) < 1e-6, 'must have at most 3 decimals (1 mg)')
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

export const alloyPrice = z.object({
  id: wireInt,
  pricePerGramMinor: wireInt,
  effectiveOn: z.string(),
  setBy: z.string().nullable(),
  createdAt: z.string(),
})
export type AlloyPrice = z.infer<typeof alloyPrice>
export const alloy = z.object({
  id: wireInt,
  code: z.string(),
  name: z.string(),
  metal: z.enum(ALLOY_METALS),
  fineness: z.number(),
  densityGPerCm3: z.number(),
  active: z.boolean(),
  version: wireInt,
  /** The price in force today (owner and manager only; null for others or when none is set). */
  pricePerGramMinor: wireInt.nullable(),
  priceOn: z.string().nullable(),
})
export type Alloy = z.infer<typeof alloy>
export const MOVEMENT_KINDS = ['bought', 'issued', 'returned', 'to-refining', 'from-refining', 'adjusted', 'delivered', 'customer-loss'] as const
export type MovementKind = (typeof MOVEMENT_KINDS)[number]
export const metalMovement = z.object({
  id: wireInt,
  kind: z.enum(MOVEMENT_KINDS),
  alloyId: wireInt,
  alloyName: z.string(),
  weightMg: wireInt,
  weightG: z.number(),
  source: z.enum(['stock', 'customer']).nullable(),
  form: z.enum(['piece', 'scrap', 'lemel']).nullable(),
  jobBagId: wireInt.nullable(),
  operationId: wireInt.nullable(),
  operationName: z.string().nullable(),
  personId: wireInt.nullable(),
  personName: z.string().nullable(),
  refiningLotId: wireInt.nullable(),
  costMinor: wireInt.nullable(),
  correctsId: wireInt.nullable(),
  reason: z.string(),
  recordedBy: z.string().nullable(),
  recordedAt: z.string(),
  clientId: z.string().nullable(),
  /** For an original row: its weight after every correction; corrections listed with who and why. */
  effectiveMg: wireInt,
  corrections: z.array(z.object({ id: wireInt, weightMg: wireInt, reason: z.string(), recordedBy: z.string().nullable(), recordedAt: z.string() })),
})
export type MetalMovement = z.infer<typeof metalMovement>
/** A weighing written (or the first answer again, for a replayed request). */
export const recordedMovement = z.object({ replayed: z.boolean(), movement: metalMovement })
export type RecordedMovement = z.infer<typeof recordedMovement>
export const recordedCorrection = recordedMovement.extend({ correctionId: wireInt })
export type RecordedCorrection = z.infer<typeof recordedCorrection>
export const lossFigures = z.object({
  issuedMg: wireInt,
  fromCustomerMg: wireInt,
  pieceMg: wireInt,
  scrapMg: wireInt,
  lemelMg: wireInt,
  returnedMg: wireInt,
  lossMg: wireInt,
  lossG: z.number(),
  lossPct: z.number().nullable(),
  lossFineMg: z.number(),
  lossFineG: z.number(),
})
export type LossFigures = z.infer<typeof lossFigures>
export const stepAccount = lossFigures.extend({
  operationId: wireInt.nullable(),
  name: z.string(),
  kindId: wireInt.nullable(),
  kind: z.string().nullable(),
  tolerancePct: z.number().nullable(),
  overTolerance: z.boolean(),
  /** Metal went out to the step, nothing has come back and the step is not finished: the metal is at the bench, not lost. */
  atBench: z.boolean(),
})
export type StepAccount = z.infer<typeof stepAccount>
export const personAccount = lossFigures.extend({ personId: wireInt.nullable(), name: z.string() })
export type PersonAccount = z.infer<typeof personAccount>
export const alloyAccount = lossFigures.extend({ alloyId: wireInt, name: z.string(), fineness: z.number() })
export type AlloyAccount = z.infer<typeof alloyAccount>
export const jobBagMetal = z.object({
  jobBagId: wireInt,
  number: z.string(),
  piece: z.string(),
  total: lossFigures,
  overTolerance: z.boolean(),
  byAlloy: z.array(alloyAccount),
  bySteps: z.array(stepAccount),
  byPerson: z.array(personAccount),
  /** The piece's weight (last weighed) and whether hallmarking is compulsory for it; a warning when the routing has no hallmarking step. */
  hallmark: z.object({
    metal: z.enum(ALLOY_METALS).nullable(),
    pieceG: z.number().nullable(),
    thresholdG: z.number().nullable(),
    needed: z.boolean(),
    /** The work is on the customer's own piece (a repair or a resize): hallmarked when it was made, so never needed again here. */
    customersPiece: z.boolean(),
    routingHasHallmarking: z.boolean(),
    warning: z.string().nullable(),
  }),
  movements: z.array(metalMovement),
  toleranceNote: z.string(),
})
export type JobBagMetal = z.infer<typeof jobBagMetal>
export const lossRow = z.object({
  key: z.string(),
  label: z.string(),
  n: wireInt,
  issuedG: z.number(),
  returnedG: z.number(),
  lossG: z.number(),
  lossPct: z.number().nullable(),
  lossFineG: z.number(),
  overTolerance: wireInt,
})
export type LossRow = z.infer<typeof lossRow>
export const lossTable = z.object({
  groupBy: z.enum(LOSS_GROUPINGS),
  filter: z.object({ from: z.string().optional(), to: z.string().optional() }),
  rows: z.array(lossRow),
  total: lossRow,
  /** Units left out because their metal is still at the bench (out to a step still open, nothing back yet). */
  atBench: wireInt,
  toleranceNote: z.string(),
})
export type LossTable = z.infer<typeof lossTable>
export const stockRow = z.object({
  alloyId: wireInt,
  code: z.string(),
  name: z.string(),
  metal: z.enum(ALLOY_METALS),
  fineness: z.number(),
  boughtMg: wireInt,
  fromCustomerMg: wireInt,
  issuedMg: wireInt,
  returnedMg: wireInt,
  toRefiningMg: wireInt,
  fromRefiningMg: wireInt,
  adjustedMg: wireInt,
  /** Finished pieces that left with their collected orders (their last weighing back), and customers' pieces handed back as weighed. */
  deliveredMg: wireInt,
  /**
   * The customers' metal lost (+) or gained (−) when their piece was handed back lighter or heavier than held: it was theirs, so it
   * leaves the balance with the piece and the workshop's own metal is unchanged.
   */
  customersLossMg: wireInt,
  /** bought + from customers − issued + returned − to refining + from refining + adjustments − delivered − customers' loss: all the metal in the workshop. */
  balanceMg: wireInt,
  balanceG: z.number(),
  /** Of the balance, the customers' own: the pieces of job bags whose metal came from the customer, back from the bench and not yet collected. */
  customersMg: wireInt,
  /** Of the balance, the workshop's own: balance − customers'. */
  ownMg: wireInt,
  /** Fine weight of the balance. */
  fineMg: z.number(),
  fineG: z.number(),
  pricePerGramMinor: wireInt.nullable(),
  priceOn: z.string().nullable(),
  /** The workshop's own metal at today's price (the customers' is not the workshop's to value as stock). */
  valueMinor: wireInt.nullable(),
  /** The customers' own metal at today's price, shown apart. */
  customersValueMinor: wireInt.nullable(),
})
export type StockRow = z.infer<typeof stockRow>
/**
 * A customer's own piece an order holds in the workshop: the piece of one of its job bags whose metal came from the customer, as
 * last weighed back from the bench, not yet handed back or collected (the Metal screen's "Customers' own").
 */
export const heldPiece = z.object({
  jobBagId: wireInt,
  number: z.string(),
  piece: z.string(),
  alloyId: wireInt,
  alloyName: z.string(),
  weightMg: wireInt,
  weightG: z.number(),
})
export type HeldPiece = z.infer<typeof heldPiece>
export const tolerance = z.object({
  kindId: wireInt,
  code: z.string(),
  name: z.string(),
  tolerancePct: z.number(),
  isDefault: z.boolean(),
  version: wireInt,
})
export type Tolerance = z.infer<typeof tolerance>
export const refiningLot = z.object({
  id: wireInt,
  number: z.string(),
  status: z.enum(['open', 'sent', 'settled']),
  refiner: z.string(),
  sentAt: z.string().nullable(),
  settledAt: z.string().nullable(),
  creditedFineMg: wireInt.nullable(),
  creditedMinor: wireInt.nullable(),
  notes: z.string(),
  version: wireInt,
  createdAt: z.string(),
  sentMg: wireInt,
  sentFineMg: z.number(),
  /** Credited fine ÷ fine sent, in % (null before settling or with nothing sent). */
  recoveryPct: z.number().nullable(),
  byAlloy: z.array(z.object({ alloyId: wireInt, name: z.string(), fineness: z.number(), weightMg: wireInt, fineMg: z.number() })),
  items: z.array(metalMovement),
})
export type RefiningLot = z.infer<typeof refiningLot>
/** Scrap or lemel put into a lot (or the first answer again, for a replayed request). */
export const lotItemAdded = z.object({ replayed: z.boolean(), lot: refiningLot })
export type LotItemAdded = z.infer<typeof lotItemAdded>
