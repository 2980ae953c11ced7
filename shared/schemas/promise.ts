// Promise dates for sales: the check for a prospective piece, turning it into an order, and an order's forecast.
import { z } from 'zod'
import { id, isoDate, name, notes } from './common'
import { minorAmount, pieceParams } from './order'

const priority = z.number({ error: 'must be 1 to 5' }).int().min(1, 'must be 1 to 5').max(5, 'must be 1 to 5').default(3)

export const promiseCheckInput = z.object({
  templateId: id,
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
  templateId: id,
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

/** An instant and the workshop-local date it falls on. */
export interface PromiseMoment {
  at: string
  date: string
}

export interface PromiseCheckResult {
  now: string
  timeZone: string
  /** What the fixed case was measured against. */
  basis: 'live-plan' | 'quick-plan'
  basisNote: string
  template: { id: number; name: string }
  operations: { key: string; name: string; kind: string; minutes: number; outsideDays: number }[]
  fixedPlan: PromiseMoment & { feasible: boolean }
  replanned: PromiseMoment & { delayedJobBags: number }
  wanted: { date: string; fixedPlanMeets: boolean; replannedMeets: boolean } | null
  range: null | {
    runs: number
    seed: number
    method: string
    /** The stated default where history is thin (distribution and its σ). */
    assumption: string
    p50: PromiseMoment
    p80: PromiseMoment
    p95: PromiseMoment
    /** The quantiles in minutes after now, unrounded. */
    quantileMinutes: { p50: number; p80: number; p95: number }
    kinds: { kind: string; source: 'history' | 'log-normal'; samples: number; p10: number; p50: number; p90: number }[]
    sampleMinutes?: number[]
  }
  elapsedMs: number
}

export interface JobBagForecast {
  jobBagId: number
  number: string
  piece: string
  status: string
  expectedCompletion: string | null
  expectedDate: string | null
  state: 'late' | 'at-risk' | 'on-time' | 'unplanned' | 'finished'
  latenessMinutes: number
  why: string
}
export interface OrderForecast {
  orderId: number
  number: string
  status: string
  due: string
  promisedDate: string | null
  timeZone: string
  plan: { id: number; number: number; publishedAt: string | null } | null
  state: JobBagForecast['state']
  jobBags: JobBagForecast[]
}
