// Planning requests: planner runs, board windows, moving or pinning a bar by hand.
import { z } from 'zod'
import { id, isoDate, isoDateTime, version } from './common'

export const planRunInput = z.object({
  timeLimitSeconds: z.number({ error: 'must be a number of seconds' }).int().min(1, 'must be at least 1 second').max(120, 'must be at most 120 seconds').default(10),
  seed: z.number().int().min(0).max(2 ** 31).default(1),
  /** small-changes: a change to the live plan must buy less lateness; best-dates: an earlier finish is worth changes too. */
  stability: z.enum(['small-changes', 'best-dates'], { error: 'must be small-changes or best-dates' }).default('small-changes'),
})
export const boardQuery = z
  .object({ from: isoDate, to: isoDate, planId: id.optional() })
  .refine((q) => q.to >= q.from, { message: 'must not be before from', path: ['to'] })
  .refine((q) => (new Date(q.to).getTime() - new Date(q.from).getTime()) / 86_400_000 <= 62, { message: 'the window may span at most 62 days', path: ['to'] })
export const moveInput = z.object({
  benchId: id.nullable().optional(),
  personId: id.nullable().optional(),
  start: isoDateTime.optional(),
  pinned: z.boolean().optional(),
  version,
})
export type PlanRunInput = z.infer<typeof planRunInput>
export type BoardQuery = z.infer<typeof boardQuery>
export type MoveInput = z.infer<typeof moveInput>
