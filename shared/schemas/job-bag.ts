// Job bags: one piece of an order with its routing (operations), planned vs actual minutes, history and status.
import { z } from 'zod'
import { id, name, version } from './common'
import { ringSizeInput } from './order'
import type { BenchOperation } from './bench-floor'

const reason = z.string({ error: 'is required' }).trim().min(3, 'say why (at least 3 characters)').max(500, 'must be at most 500 characters')
const minutes = z.number({ error: 'must be a number of minutes' }).min(0, 'must not be negative').max(100_000, 'must be at most 100000 minutes')
const stepKey = z.string().trim().min(1).max(40).regex(/^[a-z0-9][a-z0-9-]*$/, 'use lower-case letters, digits and dashes')

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
  version,
})
/**
 * A ring size changed after ordering: the ring's size, or a resize's from and to; a field left out stays, null clears it.
 * A resize keeps both sizes (the one it was and the one it is to be).
 */
export const ringSizeChange = z.object({
  ringSize: ringSizeInput.nullable().optional(),
  resizeFrom: ringSizeInput.nullable().optional(),
  resizeTo: ringSizeInput.nullable().optional(),
  reason: z.string().trim().max(500, 'must be at most 500 characters').default(''),
  version,
}).refine((c) => c.ringSize !== undefined || c.resizeFrom !== undefined || c.resizeTo !== undefined, { message: 'give the ring size, or the resize from and to', path: ['ringSize'] })
export type RingSizeChange = z.infer<typeof ringSizeChange>
export const ticketQuery = z.object({ size: z.enum(['A5', 'A6']).optional().default('A6') })
export const jobBagListQuery = z.object({ orderId: id.optional(), status: z.string().max(40).optional(), q: z.string().max(120).optional() })

export type StepAdd = z.infer<typeof stepAdd>
export type StepUpdate = z.infer<typeof stepUpdate>
export type StepSkip = z.infer<typeof stepSkip>
export type SequenceInput = z.infer<typeof sequenceInput>
export type JobBagStatusInput = z.infer<typeof jobBagStatusInput>

export interface EffectiveTimeRecord {
  id: number
  operationId: number
  personId: number
  personName: string
  benchId: number | null
  startedAt: string
  endedAt: string | null
  endReason: string | null
  note: string
  minutes: number
  voided: boolean
  /** Recorded start/end before any correction. */
  recordedStartedAt: string
  recordedEndedAt: string | null
  corrections: { id: number; kind: string; startedAt: string | null; endedAt: string | null; reason: string; by: string; at: string }[]
}

export interface JobBagOperation extends BenchOperation {
  after: string[]
  estimateSource: string
  waitAfterMinutes: number
  leadDays: number
  outside: boolean
  plannedBenchId: number | null
  plannedPersonId: number | null
  finishedAt: string | null
  /** Keys of predecessors not finished yet. */
  waitingFor: string[]
  estimateChanges: { fromMinutes: number; toMinutes: number; reason: string; by: string; at: string }[]
}

export interface HistoryEntry { at: string; kind: 'audit' | 'time'; action: string; operationId: number | null; who: string; details: Record<string, unknown> }

export interface JobBagDetail {
  id: number
  number: string
  piece: string
  status: string
  version: number
  params: Record<string, unknown>
  order: { id: number; number: string; title: string; dueDate: string; promisedDate: string | null; priority: number; status: string; customerReference: string }
  operations: JobBagOperation[]
  timeRecords: EffectiveTimeRecord[]
  history: HistoryEntry[]
  plannedMinutes: number
  actualMinutes: number
  /** The operation a person would take up next (first ready, else first held). */
  nextOperationId: number | null
}
