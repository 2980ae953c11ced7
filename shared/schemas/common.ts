// Building blocks shared by the resource schemas: ids, names, dates, times of day, paging.
import { z } from 'zod'

export const id = z.coerce.number({ error: 'must be a number' }).int('must be a whole number').positive('must be a positive id')
export const name = z.string({ error: 'is required' }).trim().min(1, 'is required').max(120, 'must be at most 120 characters')
export const code = z
  .string({ error: 'is required' })
  .trim()
  .min(1, 'is required')
  .max(40, 'must be at most 40 characters')
  .regex(/^[a-z0-9][a-z0-9-]*$/, 'use lower-case letters, digits and dashes')
export const notes = z.string().max(2000, 'must be at most 2000 characters').optional().default('')
export const isoDate = z
  .string({ error: 'is required' })
  // An empty field says so, not how a date is written (the date pickers show another format).
  .min(1, { error: 'is required', abort: true })
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date YYYY-MM-DD')
  .refine((s) => {
    const d = new Date(`${s}T00:00:00Z`)
    return !Number.isNaN(d.getTime()) && d.toISOString().startsWith(s) && d.getUTCFullYear() >= 2000 && d.getUTCFullYear() <= 2100
  }, 'must be a real date between 2000 and 2100')
/** Reason for a date chosen before the workshop's `today` (both YYYY-MM-DD, so they compare as text); empty when it will do. */
export const pastDateProblem = (date: string | null | undefined, today: string): string => (date && date < today ? 'must be today or later' : '')
export const isoDateTime = z.iso.datetime({ offset: true, error: 'must be a date and time (ISO 8601)' })
export const timeOfDay = z.string().regex(/^([01]\d|2[0-3]):[0-5]\d$/, 'must be a time HH:mm')
export const version = z.number({ error: 'is required (the version you edited)' }).int().nonnegative()

export const minutesOfDay = (t: string) => Number(t.slice(0, 2)) * 60 + Number(t.slice(3, 5))

/** Working time on one ISO weekday (1 = Monday … 7 = Sunday); breaks are the gaps between spans. */
export const workSpan = z
  .object({ weekday: z.number().int().min(1, 'must be 1 (Mon) to 7 (Sun)').max(7, 'must be 1 (Mon) to 7 (Sun)'), start: timeOfDay, end: timeOfDay })
  .refine((s) => minutesOfDay(s.end) > minutesOfDay(s.start), { message: 'must end after it starts', path: ['end'] })
export const weekPattern = z
  .array(workSpan)
  .max(50, 'has too many spans')
  .refine(
    (spans) => {
      const sorted = [...spans].sort((a, b) => a.weekday - b.weekday || minutesOfDay(a.start) - minutesOfDay(b.start))
      return sorted.every((s, i) => i === 0 || sorted[i - 1]!.weekday !== s.weekday || minutesOfDay(sorted[i - 1]!.end) <= minutesOfDay(s.start))
    },
    { message: 'spans on the same day must not overlap' },
  )
export type WorkSpan = z.infer<typeof workSpan>

export const listQuery = z.object({
  q: z.string().max(120).optional(),
  page: z.coerce.number().int().min(1).optional().default(1),
  pageSize: z.coerce.number().int().min(1).max(500).optional().default(50),
  sort: z.string().max(40).optional(),
  order: z.enum(['asc', 'desc']).optional().default('asc'),
})
export type ListQuery = z.infer<typeof listQuery>
export interface Page<T> {
  items: T[]
  total: number
  page: number
  pageSize: number
}

// Answers on the wire: plain checks, no coercion, defaults or trimming (a response schema says what the server sends).
/** A row id or count as the server sends it. */
export const wireInt = z.number().int()
/** One page of a list answer. */
export const pageOf = <T extends z.ZodType>(item: T) =>
  z.object({ items: z.array(item), total: wireInt.nonnegative(), page: wireInt.positive(), pageSize: wireInt.positive() })

// Plain-language messages everywhere a schema gives none: type errors ("is required" for a value missing or emptied,
// "must be a number", "must be a whole number") and a figure's limits ("must be at most 500"), which a form shows under the
// field as the reason it is refused.
z.config({
  customError: (issue) => {
    if (issue.code === 'invalid_type')
      return issue.input === undefined || issue.input === null
        ? 'is required'
        : `must be ${issue.expected === 'array' ? 'a list' : issue.expected === 'object' ? 'an object' : issue.expected === 'int' ? 'a whole number' : `a ${issue.expected}`}`
    if (issue.code === 'too_big' && issue.origin === 'number') return `must be ${issue.inclusive ? 'at most' : 'less than'} ${String(issue.maximum)}`
    if (issue.code === 'too_small' && issue.origin === 'number') return `must be ${issue.inclusive ? 'at least' : 'more than'} ${String(issue.minimum)}`
    if (issue.code === 'unrecognized_keys') return `has unknown field(s): ${issue.keys.join(', ')}`
    if (issue.code === 'invalid_value') return `must be one of: ${issue.values.map(String).join(', ')}`
    return undefined
  },
})
