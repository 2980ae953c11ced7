// The workshop's calendar: time zone, weekly working hours with breaks, and closures.
import { z } from 'zod'
import { isoDate, name, version, weekPattern } from './common'

const timeZone = z.string().min(1).max(64).refine((tz) => {
  try {
    new Intl.DateTimeFormat('en', { timeZone: tz })
    return true
  } catch {
    return false
  }
}, 'must be an IANA time zone such as Europe/London')

export const workshopSettingsInput = z.object({
  name,
  timeZone,
  weekPattern: weekPattern.refine((w) => w.length > 0, 'needs at least one working span'),
  /** Share of available hours the planner fills (headroom for the unexpected). */
  planningLoad: z.number().min(0.5, 'must be between 0.5 and 1').max(1, 'must be between 0.5 and 1').default(0.85),
  version,
})
export const closureInput = z
  .object({ startsOn: isoDate, endsOn: isoDate, name: z.string().trim().min(1, 'is required').max(120) })
  .refine((c) => c.endsOn >= c.startsOn, { message: 'must not be before the first day', path: ['endsOn'] })
export type WorkshopSettingsInput = z.infer<typeof workshopSettingsInput>
export type ClosureInput = z.infer<typeof closureInput>
export interface Closure extends ClosureInput { id: number }
export interface WorkshopSettings extends WorkshopSettingsInput { id: number }
