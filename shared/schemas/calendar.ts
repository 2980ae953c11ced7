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
  /** What customers' e-mails carry; left out of a change, each keeps its value. */
  address: z.string().trim().max(300, 'must be at most 300 characters').optional(),
  phone: z.string().trim().max(40, 'must be at most 40 characters').optional(),
  contactEmail: z.union([z.literal(''), z.string().trim().email('must be an e-mail address such as orders@example.com').max(200)]).optional(),
  currency: z.string().trim().toUpperCase().refine((c) => {
    try { return /^[A-Z]{3}$/.test(c) && !!new Intl.NumberFormat('en', { style: 'currency', currency: c }) } catch { return false }
  }, 'must be a three-letter currency code such as GBP or EUR').optional(),
  version,
})
export const closureInput = z
  .object({ startsOn: isoDate, endsOn: isoDate, name: z.string().trim().min(1, 'is required').max(120) })
  .refine((c) => c.endsOn >= c.startsOn, { message: 'must not be before the first day', path: ['endsOn'] })
export type WorkshopSettingsInput = z.infer<typeof workshopSettingsInput>
export type ClosureInput = z.infer<typeof closureInput>
export interface Closure extends ClosureInput { id: number }
export interface WorkshopSettings extends WorkshopSettingsInput { id: number }
