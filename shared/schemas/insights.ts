// Estimates against actual hours, learned figures, three-point estimates and job costing: query/body schemas and answer shapes.
import { z } from 'zod'
import { SIZE_BANDS } from '../domain/estimate'
import { id, isoDate, version, wireInt } from './common'

export const GROUPINGS = ['kind', 'person', 'routing', 'order', 'month'] as const
export type Grouping = (typeof GROUPINGS)[number]

const optionalId = z.preprocess((v) => (v === '' ? undefined : v), id.optional())
const optionalDate = z.preprocess((v) => (v === '' ? undefined : v), isoDate.optional())
const format = z.enum(['json', 'csv'], { error: 'must be json or csv' }).default('json')

/** Filters every insight shares: finished between two local dates (inclusive), one routing. */
export const insightFilter = z
  .object({ from: optionalDate, to: optionalDate, routingId: optionalId })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type InsightFilter = z.infer<typeof insightFilter>

export const comparisonQuery = z
  .object({
    groupBy: z.enum(GROUPINGS, { error: 'must be kind, person, routing, order or month' }).default('kind'),
    from: optionalDate,
    to: optionalDate,
    routingId: optionalId,
    format,
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type ComparisonQuery = z.infer<typeof comparisonQuery>

export const recordsQuery = z
  .object({
    groupBy: z.enum(GROUPINGS, { error: 'must be kind, person, routing, order or month' }),
    key: z.string({ error: 'is required' }).trim().min(1, 'is required').max(40),
    from: optionalDate,
    to: optionalDate,
    routingId: optionalId,
    format,
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type RecordsQuery = z.infer<typeof recordsQuery>

export const costingQuery = z
  .object({ from: optionalDate, to: optionalDate, routingId: optionalId, format })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type CostingQuery = z.infer<typeof costingQuery>

const minutesField = z.number({ error: 'must be a number of minutes' }).min(0, 'must not be negative').max(100_000, 'must be at most 100000 minutes')
export const threePointInput = z
  .object({ optimistic: minutesField, mostLikely: minutesField, pessimistic: minutesField })
  .refine((t) => t.optimistic <= t.mostLikely, { message: 'must not be less than the optimistic figure', path: ['mostLikely'] })
  .refine((t) => t.mostLikely <= t.pessimistic, { message: 'must not be less than the most likely figure', path: ['pessimistic'] })
export type ThreePointInput = z.infer<typeof threePointInput>

export const acceptSuggestionInput = z.object({
  routingId: id,
  stepKey: z.string({ error: 'is required' }).trim().min(1, 'is required').max(40),
  baseMinutes: minutesField,
  perStoneMinutes: z.number({ error: 'must be a number of minutes' }).min(0, 'must not be negative').max(1000, 'must be at most 1000 minutes'),
  /** The routing version the owner looked at. */
  routingVersion: version,
  reason: z.string().trim().max(500, 'must be at most 500 characters').default(''),
})
export type AcceptSuggestionInput = z.infer<typeof acceptSuggestionInput>

/** Outside-work cost in integer minor units of the workshop's currency; null = not known. */
const money = z
  .number({ error: 'must be an amount in minor units' })
  .int('must be whole minor units')
  .min(0, 'must not be negative')
  .max(10_000_000_000, 'is too large')
  .nullable()
export const stepCostInput = z.object({ stepKey: z.string({ error: 'is required' }).trim().min(1, 'is required').max(40), outsideCostMinor: money })
export const operationCostInput = z.object({ outsideCostMinor: money })

// ---------------------------------------------------------------------------------------------------------------
// Answers

/** The filter as the answer names it back (plain values, no defaults). */
const filterOut = z.object({ from: z.string().optional(), to: z.string().optional(), routingId: wireInt.optional() })

export const comparisonRow = z.object({
  key: z.string(),
  label: z.string(),
  n: wireInt,
  estimateHours: z.number(),
  actualHours: z.number(),
  /** actual − estimate (hours): positive = took longer than estimated. */
  biasHours: z.number(),
  biasPct: z.number().nullable(),
  direction: z.enum(['over', 'under', 'even']),
  /** Mean over operations of |actual − estimate| ÷ actual, in %. */
  mapePct: z.number().nullable(),
  /** Finished operations of the row left out of every figure above (n, hours, bias, MAPE): actual ÷ estimate outside BELIEVED_RATIO. */
  leftOut: wireInt,
})
export type ComparisonRow = z.infer<typeof comparisonRow>
export const comparisonTable = z.object({ groupBy: z.enum(GROUPINGS), filter: filterOut, rows: z.array(comparisonRow), total: comparisonRow })
export type ComparisonTable = z.infer<typeof comparisonTable>

export const scatterPoint = z.object({
  operationId: wireInt,
  kindId: wireInt,
  kind: z.string(),
  estimateMinutes: z.number(),
  actualMinutes: z.number(),
  finishedAt: z.string(),
})
export type ScatterPoint = z.infer<typeof scatterPoint>
export const biasTrend = z.object({
  months: z.array(z.string()),
  series: z.array(z.object({ kindId: wireInt, kind: z.string(), color: z.string(), biasPct: z.array(z.number().nullable()), n: z.array(wireInt) })),
  /** Finished operations left out of every cell: actual ÷ estimate outside BELIEVED_RATIO. */
  leftOut: wireInt,
})
export type BiasTrend = z.infer<typeof biasTrend>

export const drillRecord = z.object({
  timeRecordId: wireInt,
  personName: z.string(),
  startedAt: z.string(),
  endedAt: z.string().nullable(),
  minutes: z.number(),
  voided: z.boolean(),
  corrected: z.boolean(),
  endReason: z.string().nullable(),
})
export type DrillRecord = z.infer<typeof drillRecord>
export const drillOperation = z.object({
  operationId: wireInt,
  orderNumber: z.string(),
  jobBagNumber: z.string(),
  piece: z.string(),
  step: z.string(),
  kind: z.string(),
  personName: z.string(),
  finishedAt: z.string(),
  estimateMinutes: z.number(),
  estimateSource: z.string(),
  actualMinutes: z.number(),
  /** Left out of the row's figures: actual ÷ estimate outside BELIEVED_RATIO (shown, marked, so the owner can see why). */
  leftOut: z.boolean(),
  records: z.array(drillRecord),
})
export type DrillOperation = z.infer<typeof drillOperation>
export const drillDown = z.object({ groupBy: z.enum(GROUPINGS), key: z.string(), label: z.string(), operations: z.array(drillOperation) })
export type DrillDown = z.infer<typeof drillDown>

const costingFigures = {
  priceQuotedMinor: wireInt,
  estimateHours: z.number(),
  actualHours: z.number(),
  metalAtEstimateMinor: wireInt,
  /** Metal weighed (ledger); null on an order with metal to weigh and nothing weighed ("not weighed"). */
  metalAtActualMinor: wireInt.nullable(),
  /** The estimate's metal counted at actual for pieces with nothing weighed (never free); part of the cost at actual. */
  metalAsEstimatedMinor: wireInt,
  stonesAtEstimateMinor: wireInt,
  stonesAtActualMinor: wireInt,
  labourAtEstimateMinor: wireInt,
  labourAtActualMinor: wireInt,
  outsideAtEstimateMinor: wireInt,
  outsideAtActualMinor: wireInt,
  costAtEstimateMinor: wireInt,
  costAtActualMinor: wireInt,
  marginAtEstimateMinor: wireInt,
  marginAtActualMinor: wireInt,
  marginPctAtEstimate: z.number().nullable(),
  marginPctAtActual: z.number().nullable(),
  /** Grams of the customer's own metal lost in the work: no cost to the workshop, shown all the same. */
  customerMetalLossG: z.number(),
  /** Finished outside-work steps, and those of them with no cost entered (expected or invoiced). */
  outsideSteps: wireInt,
  outsideUncosted: wireInt,
  /** What each margin could not count, in words (shared/domain/costing.ts), or that all four parts are counted: shown beside the figure. */
  caveatAtEstimate: z.string(),
  caveatAtActual: z.string(),
}
/** One complete order costed: amounts (`…Minor`) in integer minor units of the table's currency. */
export const costingRow = z.object({
  orderId: wireInt,
  orderNumber: z.string(),
  title: z.string(),
  customerName: z.string(),
  finishedOn: z.string(),
  ...costingFigures,
})
export type CostingRow = z.infer<typeof costingRow>
export const costingTable = z.object({
  filter: filterOut,
  /** The workshop's currency (ISO 4217) the figures are in. */
  currency: z.string(),
  rows: z.array(costingRow),
  /** `metalAsEstimatedOrders`: orders whose cost at actual counts some metal as estimated because nothing was weighed. */
  total: z.object({ ...costingFigures, orders: wireInt, metalAsEstimatedOrders: wireInt }),
  /** How every figure is reached, as one paragraph. */
  note: z.string(),
})
export type CostingTable = z.infer<typeof costingTable>

/** How much history a learned figure rests on. */
export const history = z.object({
  n: wireInt,
  /** Finished operations of the same group left out of the figure: actual ÷ estimate outside BELIEVED_RATIO. */
  leftOut: wireInt,
  from: z.string().nullable(),
  to: z.string().nullable(),
  spread: z.object({ q1: z.number(), median: z.number(), q3: z.number(), mad: z.number() }).nullable(),
})
export type History = z.infer<typeof history>
const fitMethod = z.enum(['theil-sen', 'ratio-of-medians'])
export const kindFigure = z.object({
  kindId: wireInt,
  code: z.string(),
  name: z.string(),
  method: fitMethod,
  /** median(actual at standard speed) ÷ median(estimate): above 1 = runs over. */
  ratio: z.number().nullable(),
  /** Setting-like kinds: learned minutes per stone (Theil–Sen slope) and extra minutes on top of the routing base. */
  perStoneMinutes: z.number().nullable(),
  extraBaseMinutes: z.number().nullable(),
  sizeBands: z.array(z.object({ band: z.enum(SIZE_BANDS), factor: z.number(), n: wireInt })),
  history,
})
export type KindFigure = z.infer<typeof kindFigure>
export const personFigure = z.object({
  personId: wireInt,
  name: z.string(),
  /** median(estimate ÷ actual) over their finished work. */
  speed: z.number().nullable(),
  history,
  kinds: z.array(z.object({ kindId: wireInt, kind: z.string(), learned: z.number().nullable(), configured: z.number().nullable(), n: wireInt })),
})
export type PersonFigure = z.infer<typeof personFigure>
const stepMinutes = z.object({ baseMinutes: z.number(), perStoneMinutes: z.number() })
export const stepSuggestion = z.object({
  routingId: wireInt,
  routingName: z.string(),
  routingVersion: wireInt,
  stepKey: z.string(),
  stepName: z.string(),
  kindId: wireInt,
  kind: z.string(),
  current: stepMinutes,
  /** null when history is thin (n < 5: use a three-point estimate) or the routing already fits. */
  suggested: stepMinutes.extend({ method: fitMethod, changePct: z.number() }).nullable(),
  thin: z.boolean(),
  /** Enough history, but the step's minutes also count the piece's size, stone size bands or the routing's learning curve, which the fit leaves out: no figure offered. */
  unfitted: z.boolean(),
  history,
})
export type StepSuggestion = z.infer<typeof stepSuggestion>
export const learnedEstimates = z.object({
  asOf: z.string(),
  kinds: z.array(kindFigure),
  people: z.array(personFigure),
  steps: z.array(stepSuggestion),
})
export type LearnedEstimates = z.infer<typeof learnedEstimates>

export const stepChange = z.object({
  id: wireInt,
  routingId: wireInt,
  routingName: z.string(),
  stepKey: z.string(),
  /** The step's name in the routing (its key when the step has gone since). */
  stepName: z.string(),
  kind: z.string(),
  from: stepMinutes,
  to: stepMinutes,
  routingVersion: wireInt,
  basis: z.object({ n: wireInt, from: z.string().nullable(), to: z.string().nullable(), method: z.string(), spread: z.record(z.string(), z.number()) }),
  reason: z.string(),
  acceptedBy: z.string(),
  at: z.string(),
})
export type StepChange = z.infer<typeof stepChange>

/** PERT from three points: mean minutes, variance and standard deviation (see shared/domain/estimate.ts). */
export const threePointEstimate = z.object({ minutes: z.number(), source: z.literal('three-point'), variance: z.number(), stdDev: z.number() })
export type ThreePointEstimate = z.infer<typeof threePointEstimate>

/** An outside step's expected cost per unit in integer minor units of `currency` (null: not set). */
export const stepCost = z.object({
  routingId: wireInt,
  routingName: z.string(),
  stepKey: z.string(),
  stepName: z.string(),
  leadDays: z.number(),
  outsideCostMinor: wireInt.nullable(),
  currency: z.string(),
})
export type StepCost = z.infer<typeof stepCost>
export const stepCostSet = z.object({ routingId: wireInt, stepKey: z.string(), outsideCostMinor: wireInt.nullable() })
export const operationCostSet = z.object({ operationId: wireInt, outsideCostMinor: wireInt.nullable() })
