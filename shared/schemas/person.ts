// People at the benches: skills per operation kind (level 1–3, speed), weekly pattern and leave.
import { z } from 'zod'
import { id, isoDate, name, version, weekPattern, wireInt } from './common'

export const skillInput = z.object({
  kindId: id,
  level: z.number({ error: 'must be 1, 2 or 3' }).int().min(1, 'must be 1, 2 or 3').max(3, 'must be 1, 2 or 3'),
  /** Speed factor: planned minutes = estimate ÷ speed (a trainee at 0.6 takes longer). */
  speed: z.number({ error: 'must be a number' }).min(0.3, 'must be between 0.3 and 3').max(3, 'must be between 0.3 and 3').default(1),
})
export const personInput = z.object({
  name,
  userId: id.nullable().default(null),
  /** null: follows the workshop's hours. */
  weekPattern: weekPattern.nullable().default(null),
  /** What an hour of this person costs, in integer minor units of the workshop's currency. */
  hourlyRateMinor: z
    .number({ error: 'must be an amount in minor units' })
    .int('must be whole minor units')
    .min(0, 'must not be negative')
    .max(100_000_000, 'is too large')
    .default(0),
  active: z.boolean().default(true),
  skills: z
    .array(skillInput)
    .max(50)
    .default([])
    .refine((s) => new Set(s.map((x) => x.kindId)).size === s.length, 'each operation kind may appear once'),
})
export const personUpdate = personInput.partial().extend({ version })
export const leaveInput = z
  .object({ startsOn: isoDate, endsOn: isoDate, reason: z.string().trim().max(200).default('leave') })
  .refine((l) => l.endsOn >= l.startsOn, { message: 'must not be before the first day', path: ['endsOn'] })
export type PersonInput = z.infer<typeof personInput>
export type PersonUpdate = z.infer<typeof personUpdate>
export type SkillInput = z.infer<typeof skillInput>
export type LeaveInput = z.infer<typeof leaveInput>

// ---- Answers ----

export const leave = z.object({ id: wireInt, personId: wireInt, startsOn: isoDate, endsOn: isoDate, reason: z.string() })
export const person = z.object({
  id: wireInt,
  version: wireInt,
  name: z.string(),
  userId: wireInt.nullable(),
  userEmail: z.string().nullable(),
  /** null: follows the workshop's hours. */
  weekPattern: z.array(z.object({ weekday: wireInt, start: z.string(), end: z.string() })).nullable(),
  /** What an hour of this person costs; only the owner and the manager are told (bench and sales lists leave it out). */
  hourlyRateMinor: wireInt.optional(),
  active: z.boolean(),
  skills: z.array(z.object({ kindId: wireInt, level: wireInt, speed: z.number() })),
  leave: z.array(leave),
})
export type Leave = z.infer<typeof leave>
export type Person = z.infer<typeof person>
