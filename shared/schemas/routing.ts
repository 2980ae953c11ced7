// Routings: the usual steps of a kind of piece, with estimate inputs and a step graph.
import { z } from 'zod'
import { code, id, name, notes, version, wireInt } from './common'
import type { RoutingWarning } from '../domain/routing-warnings'
import { ROUTING_KINDS } from '../domain/routing-kinds'

const bandFactor = z.number({ error: 'must be a number' }).min(0.2, 'must be at least 0.2').max(5, 'must be at most 5')

export const stepInput = z.object({
  key: z
    .string()
    .trim()
    .min(1, 'is required')
    .max(20)
    .regex(/^[a-z0-9-]+$/, 'use lower-case letters, digits and dashes'),
  kindId: id,
  name,
  /** Fixed minutes, plus per-stone minutes × stone count (setting). */
  baseMinutes: z.number({ error: 'must be a number' }).min(0, 'must not be negative').max(10000, 'must be at most 10000'),
  perStoneMinutes: z.number().min(0, 'must not be negative').max(240).default(0),
  /** Minutes per millimetre of the piece's size (polishing a longer cuff takes longer); 0 where size does not matter. */
  perMmMinutes: z.number({ error: 'must be a number' }).min(0, 'must not be negative').max(60, 'must be at most 60').default(0),
  /** Factor on the per-stone minutes by the stones' size band; a band left out counts 1. */
  sizeBandFactors: z
    .strictObject(
      { melee: bandFactor.optional(), small: bandFactor.optional(), large: bandFactor.optional() },
      { error: 'only melee, small and large have factors' },
    )
    .default({}),
  /** Factor on the per-stone minutes by a stone's role on the piece's stone list; a role left out takes the usual factor (DEFAULT_ROLE_FACTORS). */
  roleFactors: z
    .strictObject(
      { centre: bandFactor.optional(), side: bandFactor.optional(), halo: bandFactor.optional(), pave: bandFactor.optional() },
      { error: 'only centre, side, halo and pave have factors' },
    )
    .default({}),
  requiredLevel: z.number().int().min(1, 'must be 1, 2 or 3').max(3, 'must be 1, 2 or 3').default(1),
  waitAfterMinutes: z.number().int().min(0, 'must not be negative').max(10080, 'must be at most a week').default(0),
  /** Outside work (casting, hallmarking): working days away, no bench. */
  leadDays: z.number().int().min(0, 'must not be negative').max(60, 'must be at most 60').default(0),
  after: z.array(z.string()).max(20).default([]),
})
export const routingInput = z
  .object({
    code,
    name,
    description: notes,
    /** What the routing makes; a repair's weighing out starts from the customer's own piece (shared/domain/metal.ts worksOnCustomersPiece). */
    kind: z.enum(ROUTING_KINDS, { error: 'must be piece (a new piece), repair or run (a production run)' }).default('piece'),
    /**
     * Production runs: the share of the time per piece left after each doubling of the quantity (0.85: 40 pieces take
     * 12 × 40^(1 + log₂ 0.85) minutes where one takes 12); null = every piece takes the same time.
     */
    learningRate: z
      .number({ error: 'must be a number or empty' })
      .gt(0.5, 'must be above 0.5 (50 %)')
      .max(1, 'must be at most 1 (100 %)')
      .nullable()
      .default(null),
    /** A ring resize: an order on it asks for the size the ring is and the size it is to be. */
    resizesRing: z.boolean({ error: 'must be true or false' }).default(false),
    steps: z.array(stepInput).min(1, 'needs at least one step').max(40, 'has too many steps'),
  })
  .superRefine((t, ctx) => {
    if (t.resizesRing && t.kind !== 'repair') ctx.addIssue({ code: 'custom', path: ['resizesRing'], message: 'only a repair resizes the customer’s ring' })
    const keys = new Set<string>()
    t.steps.forEach((s, i) => {
      if (keys.has(s.key)) ctx.addIssue({ code: 'custom', path: ['steps', i, 'key'], message: `step key "${s.key}" is used twice` })
      keys.add(s.key)
    })
    t.steps.forEach((s, i) =>
      s.after.forEach((a) => {
        if (!keys.has(a)) ctx.addIssue({ code: 'custom', path: ['steps', i, 'after'], message: `follows unknown step "${a}"` })
        if (a === s.key) ctx.addIssue({ code: 'custom', path: ['steps', i, 'after'], message: 'a step cannot follow itself' })
      }),
    )
    // Cycle check (Kahn): the steps must form a graph that can be worked through.
    const indeg = new Map(t.steps.map((s) => [s.key, new Set(s.after.filter((a) => keys.has(a))).size]))
    const queue = [...indeg].filter(([, d]) => d === 0).map(([k]) => k)
    let seen = 0
    while (queue.length) {
      const k = queue.shift()!
      seen++
      for (const s of t.steps)
        if (s.after.includes(k)) {
          indeg.set(s.key, indeg.get(s.key)! - 1)
          if (indeg.get(s.key) === 0) queue.push(s.key)
        }
    }
    if (seen < t.steps.length) ctx.addIssue({ code: 'custom', path: ['steps'], message: 'the steps follow each other in a circle' })
  })
export const routingUpdate = z.object({ version }).and(routingInput)
export type StepInput = z.infer<typeof stepInput>
export type RoutingInput = z.infer<typeof routingInput>

// ---- Answers ----

export const routingStep = z.object({
  id: wireInt,
  key: z.string(),
  kindId: wireInt,
  name: z.string(),
  baseMinutes: z.number(),
  perStoneMinutes: z.number(),
  perMmMinutes: z.number(),
  sizeBandFactors: z.object({ melee: z.number().optional(), small: z.number().optional(), large: z.number().optional() }),
  roleFactors: z.object({ centre: z.number().optional(), side: z.number().optional(), halo: z.number().optional(), pave: z.number().optional() }),
  requiredLevel: wireInt,
  waitAfterMinutes: z.number(),
  leadDays: z.number(),
  after: z.array(z.string()),
})
/** What the step graph allows that is probably not meant (shared/domain/routing-warnings.ts); saving is still allowed. */
export const routingWarning = z.discriminatedUnion('code', [
  z.object({ code: z.literal('starts-while-away'), step: z.string(), outside: z.array(z.string()), message: z.string() }),
  z.object({ code: z.literal('not-connected'), steps: z.array(z.string()), message: z.string() }),
]) satisfies z.ZodType<RoutingWarning>
export const routing = z.object({
  id: wireInt,
  code: z.string(),
  name: z.string(),
  description: z.string(),
  kind: z.enum(ROUTING_KINDS),
  learningRate: z.number().nullable(),
  resizesRing: z.boolean(),
  steps: z.array(routingStep),
  version: wireInt,
  warnings: z.array(routingWarning),
})
export type RoutingStep = z.infer<typeof routingStep>
export type Routing = z.infer<typeof routing>
export type { RoutingWarning } from '../domain/routing-warnings'
