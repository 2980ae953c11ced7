// Estimates against actual hours, learned figures, three-point estimates and job costing: query/body schemas and answer shapes.
import { z } from 'zod'
import type { SizeBand } from '../domain/estimate'
import { id, isoDate, version } from './common'

export const GROUPINGS = ['kind', 'person', 'template', 'order', 'month'] as const
export type Grouping = (typeof GROUPINGS)[number]

const optionalId = z.preprocess((v) => (v === '' ? undefined : v), id.optional())
const optionalDate = z.preprocess((v) => (v === '' ? undefined : v), isoDate.optional())
const format = z.enum(['json', 'csv'], { error: 'must be json or csv' }).default('json')

/** Filters every insight shares: finished between two local dates (inclusive), one routing. */
export const insightFilter = z
  .object({ from: optionalDate, to: optionalDate, templateId: optionalId })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type InsightFilter = z.infer<typeof insightFilter>

export const comparisonQuery = z
  .object({
    groupBy: z.enum(GROUPINGS, { error: 'must be kind, person, template, order or month' }).default('kind'),
    from: optionalDate,
    to: optionalDate,
    templateId: optionalId,
    format,
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type ComparisonQuery = z.infer<typeof comparisonQuery>

export const recordsQuery = z
  .object({
    groupBy: z.enum(GROUPINGS, { error: 'must be kind, person, template, order or month' }),
    key: z.string({ error: 'is required' }).trim().min(1, 'is required').max(40),
    from: optionalDate,
    to: optionalDate,
    templateId: optionalId,
    format,
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type RecordsQuery = z.infer<typeof recordsQuery>

export const costingQuery = z
  .object({ from: optionalDate, to: optionalDate, templateId: optionalId, format })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before the start date', path: ['to'] })
export type CostingQuery = z.infer<typeof costingQuery>

const minutesField = z.number({ error: 'must be a number of minutes' }).min(0, 'must not be negative').max(100_000, 'must be at most 100000 minutes')
export const threePointInput = z
  .object({ optimistic: minutesField, mostLikely: minutesField, pessimistic: minutesField })
  .refine((t) => t.optimistic <= t.mostLikely, { message: 'must not be less than the optimistic figure', path: ['mostLikely'] })
  .refine((t) => t.mostLikely <= t.pessimistic, { message: 'must not be less than the most likely figure', path: ['pessimistic'] })
export type ThreePointInput = z.infer<typeof threePointInput>

export const acceptSuggestionInput = z.object({
  templateId: id,
  stepKey: z.string({ error: 'is required' }).trim().min(1, 'is required').max(40),
  baseMinutes: minutesField,
  perStoneMinutes: z.number({ error: 'must be a number of minutes' }).min(0, 'must not be negative').max(1000, 'must be at most 1000 minutes'),
  /** The routing version the owner looked at. */
  templateVersion: version,
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

export interface ComparisonRow {
  key: string
  label: string
  n: number
  estimateHours: number
  actualHours: number
  /** actual − estimate (hours): positive = took longer than estimated. */
  biasHours: number
  biasPct: number | null
  direction: 'over' | 'under' | 'even'
  /** Mean over operations of |actual − estimate| ÷ actual, in %. */
  mapePct: number | null
}
export interface ComparisonTable {
  groupBy: Grouping
  filter: InsightFilter
  rows: ComparisonRow[]
  total: ComparisonRow
}

export interface ScatterPoint {
  operationId: number
  kindId: number
  kind: string
  estimateMinutes: number
  actualMinutes: number
  finishedAt: string
}
export interface BiasTrend {
  months: string[]
  series: { kindId: number; kind: string; color: string; biasPct: (number | null)[]; n: number[] }[]
}

export interface DrillRecord {
  timeRecordId: number
  personName: string
  startedAt: string
  endedAt: string | null
  minutes: number
  voided: boolean
  corrected: boolean
  endReason: string | null
}
export interface DrillOperation {
  operationId: number
  orderNumber: string
  jobBagNumber: string
  piece: string
  step: string
  kind: string
  personName: string
  finishedAt: string
  estimateMinutes: number
  estimateSource: string
  actualMinutes: number
  records: DrillRecord[]
}
export interface DrillDown {
  groupBy: Grouping
  key: string
  label: string
  operations: DrillOperation[]
}

/** One complete order costed: amounts (`…Minor`) in integer minor units of the table's currency. */
export interface CostingRow {
  orderId: number
  orderNumber: string
  title: string
  customerName: string
  finishedOn: string
  priceQuotedMinor: number
  estimateHours: number
  actualHours: number
  metalAtEstimateMinor: number
  metalAtActualMinor: number
  stonesAtEstimateMinor: number
  stonesAtActualMinor: number
  labourAtEstimateMinor: number
  labourAtActualMinor: number
  outsideAtEstimateMinor: number
  outsideAtActualMinor: number
  costAtEstimateMinor: number
  costAtActualMinor: number
  marginAtEstimateMinor: number
  marginAtActualMinor: number
  marginPctAtEstimate: number | null
  marginPctAtActual: number | null
  /** Grams of the customer's own metal lost in the work: no cost to the workshop, shown all the same. */
  customerMetalLossG: number
  /** Finished outside-work steps, and those of them with no cost entered (expected or invoiced). */
  outsideSteps: number
  outsideUncosted: number
  /** What each margin could not count, in words (shared/domain/costing.ts), or that all four parts are counted: shown beside the figure. */
  caveatAtEstimate: string
  caveatAtActual: string
}
export interface CostingTable {
  filter: InsightFilter
  /** The workshop's currency (ISO 4217) the figures are in. */
  currency: string
  rows: CostingRow[]
  total: Omit<CostingRow, 'orderId' | 'orderNumber' | 'title' | 'customerName' | 'finishedOn'> & { orders: number }
  /** How every figure is reached, as one paragraph. */
  note: string
}

/** How much history a learned figure rests on. */
export interface History {
  n: number
  from: string | null
  to: string | null
  spread: { q1: number; median: number; q3: number; mad: number } | null
}

export interface KindFigure {
  kindId: number
  code: string
  name: string
  method: 'theil-sen' | 'ratio-of-medians'
  /** median(actual at standard speed) ÷ median(estimate): above 1 = runs over. */
  ratio: number | null
  /** Setting-like kinds: learned minutes per stone (Theil–Sen slope) and extra minutes on top of the routing base. */
  perStoneMinutes: number | null
  extraBaseMinutes: number | null
  sizeBands: { band: SizeBand; factor: number; n: number }[]
  history: History
}
export interface PersonFigure {
  personId: number
  name: string
  /** median(estimate ÷ actual) over their finished work. */
  speed: number | null
  history: History
  kinds: { kindId: number; kind: string; learned: number | null; configured: number | null; n: number }[]
}
export interface StepSuggestion {
  templateId: number
  templateName: string
  templateVersion: number
  stepKey: string
  stepName: string
  kindId: number
  kind: string
  current: { baseMinutes: number; perStoneMinutes: number }
  /** null when history is thin (n < 5: use a three-point estimate) or the routing already fits. */
  suggested: { baseMinutes: number; perStoneMinutes: number; method: 'theil-sen' | 'ratio-of-medians'; changePct: number } | null
  thin: boolean
  /** Enough history, but the step's minutes also count the piece's size, stone size bands or the routing's learning curve, which the fit leaves out: no figure offered. */
  unfitted: boolean
  history: History
}
export interface LearnedEstimates {
  asOf: string
  kinds: KindFigure[]
  people: PersonFigure[]
  steps: StepSuggestion[]
}

export interface StepChange {
  id: number
  templateId: number
  templateName: string
  stepKey: string
  /** The step's name in the routing (its key when the step has gone since). */
  stepName: string
  kind: string
  from: { baseMinutes: number; perStoneMinutes: number }
  to: { baseMinutes: number; perStoneMinutes: number }
  templateVersion: number
  basis: { n: number; from: string | null; to: string | null; method: string; spread: Record<string, number> }
  reason: string
  acceptedBy: string
  at: string
}
