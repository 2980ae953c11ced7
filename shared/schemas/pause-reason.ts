// The workshop's pause reasons: what the owner may add and change, and what every screen reads.
import { z } from 'zod'
import { version, wireInt } from './common'

const label = z.string({ error: 'is required' }).trim().min(2, 'must be at least 2 characters').max(60, 'must be at most 60 characters')

export const pauseReasonInput = z.object({
  label,
  /** The bench must say briefly why when pausing for this reason. */
  needsNote: z.boolean({ error: 'must be true or false' }).optional().default(false),
})
export const pauseReasonUpdate = z.object({
  label: label.optional(),
  needsNote: z.boolean({ error: 'must be true or false' }).optional(),
  /** Off: no longer offered at the bench; past records keep its name. */
  active: z.boolean({ error: 'must be true or false' }).optional(),
  version,
})

/** A pause reason's code as a bench sends it (checked against the workshop's own list). */
export const pauseReasonCode = z.string({ error: 'is required' }).trim().min(1, 'is required').max(60, 'must be at most 60 characters')

export type PauseReasonInput = z.infer<typeof pauseReasonInput>
export type PauseReasonUpdate = z.infer<typeof pauseReasonUpdate>

// ---- Answers ----

export const pauseReason = z.object({
  id: wireInt,
  code: z.string(),
  label: z.string(),
  needsNote: z.boolean(),
  active: z.boolean(),
  sort: wireInt,
  version: wireInt,
})
export type PauseReason = z.infer<typeof pauseReason>
