// A piece's stone list, stones counted out to the setter and back, corrections, and a customer's own stones handed back.
import { z } from 'zod'
import { STONE_COUNT_KINDS, STONE_MOVEMENT_KINDS, STONE_ROLES, type Reconciliation } from '../domain/stones'
import { id, version, wireInt } from './common'

const text = (max: number) => z.string().trim().max(max, `must be at most ${max} characters`)
const reason = z.string({ error: 'is required (say why)' }).trim().min(3, 'say why (at least 3 characters)').max(500, 'must be at most 500 characters')
/** Client-generated id: a replay of the same request gets the first answer back. */
export const clientId = z
  .string()
  .trim()
  .min(8, 'must be at least 8 characters')
  .max(64, 'must be at most 64 characters')
  .regex(/^[A-Za-z0-9_-]+$/, 'use letters, digits, - and _')

const lineFields = {
  role: z.enum(STONE_ROLES, { error: 'must be centre, side, halo or pave' }),
  stone: text(40).min(1, 'is required'),
  shape: text(30).min(1, 'is required'),
  sizeMm: z.number({ error: 'must be a number of mm' }).positive('must be more than 0 mm').max(30, 'must be at most 30 mm'),
  count: z.number({ error: 'must be a whole number' }).int('must be a whole number').min(1, 'must be at least 1').max(2000, 'must be at most 2000'),
  /** Carats of one stone; left empty for a round stone, it is estimated from its size (and depth when given). */
  caratEach: z.number({ error: 'must be a number' }).positive('must be more than 0').max(100, 'must be at most 100 ct').nullable(),
  /** Measured total depth of one stone (mm): kept on the line and shown on the ticket; for a round brilliant it also gives a closer carat estimate. */
  depthMm: z.number({ error: 'must be a number of mm' }).positive('must be more than 0 mm').max(30, 'must be at most 30 mm').nullable(),
  quality: text(200),
  customerOwned: z.boolean({ error: 'must be true or false' }),
  /** Minor units (pence, cents) per stone; null when not known or the customer's own. */
  costEachMinor: z
    .number({ error: 'must be a whole number of minor units' })
    .int('must be a whole number of minor units')
    .min(0, 'must not be negative')
    .max(100_000_000)
    .nullable(),
}
export const stoneLineInput = z.object({
  ...lineFields,
  stone: lineFields.stone.default('diamond'),
  shape: lineFields.shape.default('round'),
  caratEach: lineFields.caratEach.default(null),
  depthMm: lineFields.depthMm.default(null),
  quality: lineFields.quality.default(''),
  customerOwned: lineFields.customerOwned.default(false),
  costEachMinor: lineFields.costEachMinor.default(null),
})
/** A change names only what changes (no defaults: a field left out keeps its value). */
export const stoneLineUpdate = z.object(lineFields).partial().extend({ version })
export const stoneLineRemoveQuery = z.object({ version: z.coerce.number({ error: 'is required (the version you edited)' }).int().nonnegative() })

/** Stones counted in one go (e.g. 17 set and 1 back): each entry one kind. */
export const stoneMovementInput = z.object({
  entries: z
    .array(
      z.object({
        kind: z.enum(STONE_COUNT_KINDS, { error: 'must be issued, set, returned, broken or lost' }),
        count: z.number({ error: 'must be a whole number' }).int('must be a whole number').min(1, 'must be at least 1').max(2000, 'must be at most 2000'),
      }),
    )
    .min(1, 'count at least one kind')
    .max(5, 'has too many entries'),
  operationId: id.nullable().default(null),
  personId: id.nullable().default(null),
  clientId,
  /** Needed when the count goes past what was given out (a mismatch on purpose, e.g. a spare found). */
  reason: z.string().trim().max(500).default(''),
})
export const stoneCorrectionInput = z.object({
  /** What the corrected row should have said (0 voids it). */
  count: z.number({ error: 'must be a whole number' }).int('must be a whole number').min(0, 'must not be negative').max(2000, 'must be at most 2000'),
  reason,
  clientId,
})
export const stoneCheckBackInput = z.object({
  count: z.number({ error: 'must be a whole number' }).int('must be a whole number').min(1, 'must be at least 1').max(2000, 'must be at most 2000'),
  clientId,
  reason: z.string().trim().max(500).default(''),
})
export type StoneLineInput = z.infer<typeof stoneLineInput>
export type StoneLineUpdate = z.infer<typeof stoneLineUpdate>
export type StoneMovementInput = z.infer<typeof stoneMovementInput>
export type StoneCorrectionInput = z.infer<typeof stoneCorrectionInput>
export type StoneCheckBackInput = z.infer<typeof stoneCheckBackInput>

// ---- Answers ----

export const stoneMovementOut = z.object({
  id: wireInt,
  kind: z.enum(STONE_MOVEMENT_KINDS),
  count: wireInt,
  personName: z.string().nullable(),
  operationId: wireInt.nullable(),
  correctsId: wireInt.nullable(),
  reason: z.string(),
  recordedBy: z.string().nullable(),
  recordedAt: z.string(),
  corrected: z.boolean(),
})
export type StoneMovementOut = z.infer<typeof stoneMovementOut>
/** with-setter: stones out while setting is under way; mismatch: the counts do not add up and nobody is setting. */
export const STONE_LINE_STATES = ['none-issued', 'with-setter', 'balanced', 'mismatch'] as const
export type StoneLineState = (typeof STONE_LINE_STATES)[number]
/** Counts by kind (corrections included), what is accounted for and the difference (see shared/domain/stones.ts). */
export const reconciliation = z.object({
  issued: wireInt,
  set: wireInt,
  returned: wireInt,
  broken: wireInt,
  lost: wireInt,
  checkedBack: wireInt,
  accounted: wireInt,
  difference: wireInt,
  balanced: z.boolean(),
}) satisfies z.ZodType<Reconciliation>
export const stoneLineOut = z.object({
  id: wireInt,
  jobBagId: wireInt,
  role: z.enum(STONE_ROLES),
  stone: z.string(),
  shape: z.string(),
  sizeMm: z.number(),
  depthMm: z.number().nullable(),
  count: wireInt,
  caratEach: z.number().nullable(),
  caratEstimated: z.boolean(),
  quality: z.string(),
  customerOwned: z.boolean(),
  customerId: wireInt.nullable(),
  costEachMinor: wireInt.nullable(),
  version: wireInt,
  reconciliation,
  state: z.enum(STONE_LINE_STATES),
  /** The customer's own stones still to hand back at collection (count less broken and lost, less those checked back). */
  handBackOutstanding: wireInt,
  movements: z.array(stoneMovementOut),
})
export type StoneLineOut = z.infer<typeof stoneLineOut>
/** A job bag's stone list with the counts to and from the setter: every stone route's answer. */
export const jobBagStones = z.object({
  jobBagId: wireInt,
  quantity: wireInt,
  settingRunning: z.boolean(),
  lines: z.array(stoneLineOut),
  totals: reconciliation.extend({ lines: wireInt, stonesPerPiece: wireInt, caratsPerPiece: z.number() }),
  /** A customer's own stones: all counted back from the setter (needed before the order is ready) and handed back (before collected). */
  customerStones: z.object({ lines: wireInt, reconciled: z.boolean(), handedBack: z.boolean(), problems: z.array(z.string()) }),
})
export type JobBagStones = z.infer<typeof jobBagStones>
