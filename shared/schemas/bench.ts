// Benches: where work is done, what kinds of operation each can host, and when it is down.
import { z } from 'zod'
import { id, isoDateTime, name, notes, version, wireInt } from './common'

export const benchInput = z.object({
  name,
  kind: z.string().trim().min(1, 'is required').max(60),
  capacity: z.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(4, 'must be at most 4').default(1),
  kindIds: z.array(id).max(50).default([]),
  active: z.boolean().default(true),
  notes,
})
export const benchUpdate = benchInput.partial().extend({ version })
export const downtimeInput = z
  .object({ startsAt: isoDateTime, endsAt: isoDateTime, reason: z.string().trim().min(1, 'is required').max(200) })
  .refine((d) => new Date(d.endsAt) > new Date(d.startsAt), { message: 'must end after it starts', path: ['endsAt'] })
export type BenchInput = z.infer<typeof benchInput>
export type BenchUpdate = z.infer<typeof benchUpdate>
export type DowntimeInput = z.infer<typeof downtimeInput>

// ---- Answers ----

export const downtime = z.object({ id: wireInt, benchId: wireInt, startsAt: isoDateTime, endsAt: isoDateTime, reason: z.string() })
export const bench = z.object({
  id: wireInt,
  version: wireInt,
  name: z.string(),
  kind: z.string(),
  capacity: wireInt,
  kindIds: z.array(wireInt),
  active: z.boolean(),
  notes: z.string(),
  downtime: z.array(downtime),
})
export type Downtime = z.infer<typeof downtime>
export type Bench = z.infer<typeof bench>
