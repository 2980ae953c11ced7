// Planning: requests (planner runs, board windows, moving or pinning a bar by hand) and answers (runs, versions, comparisons, moves, week load).
import { z } from 'zod'
import { id, isoDate, isoDateTime, version, wireInt } from './common'
import type { RuleViolation } from '../domain/rules'

export const planRunInput = z.object({
  timeLimitSeconds: z
    .number({ error: 'must be a number of seconds' })
    .int()
    .min(1, 'must be at least 1 second')
    .max(120, 'must be at most 120 seconds')
    .default(10),
  seed: z
    .number()
    .int()
    .min(0)
    .max(2 ** 31)
    .default(1),
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

// ---- The plan's own records: the live plan and drafts place each operation the same way ----

const recordId = z.number().int().positive()
/** Where a plan puts one operation: its bench and person (both null for outside work), when, and whether a manager pinned it. */
export const planAssignment = z.object({
  operationId: recordId,
  benchId: recordId.nullable(),
  personId: recordId.nullable(),
  start: isoDateTime,
  end: isoDateTime,
  pinned: z.boolean().optional(),
})
/** Ids as drafts saved before assignments were typed wrote them ("12"), read as numbers. */
const oldId = (v: unknown) => (typeof v === 'string' && /^\d+$/.test(v) ? Number(v) : v)
/** One stored draft entry (keyed by its operation id); older drafts lack operationId and hold string ids, segments and a reason. */
export const storedAssignment = (key: string) =>
  z.preprocess((v) => {
    if (typeof v !== 'object' || v === null) return v
    const o = v as Record<string, unknown>
    return {
      operationId: oldId(o.operationId ?? key),
      benchId: oldId(o.benchId),
      personId: oldId(o.personId),
      start: o.start,
      end: o.end,
      ...(o.pinned === undefined ? {} : { pinned: o.pinned }),
    }
  }, planAssignment)
export type PlanAssignment = z.infer<typeof planAssignment>

// ---- Answers ----

/** The search's stage at the report: the first plan, the rough order without calendars, the order on the calendars, step by step. */
export const runStage = z.enum(['start', 'sketch', 'graph', 'decoder'])
export type RunStage = z.infer<typeof runStage>
/** A planner run's progress (the newest the instance running it wrote). */
export const runProgress = z.object({
  iteration: z.number(),
  weightedTardiness: z.number(),
  makespan: z.number(),
  elapsedMs: z.number(),
  stage: runStage.optional(),
})
export const planRun = z.object({
  id: z.string(),
  /** queued: waiting for an app instance to take it; running: solving (on whichever instance took it). */
  status: z.enum(['queued', 'running', 'done', 'cancelled', 'failed']),
  startedAt: isoDateTime,
  timeLimitSeconds: z.number(),
  progress: runProgress.nullable(),
  planId: wireInt.nullable(),
  error: z.string().nullable(),
  note: z.string().nullable(),
  stability: z.enum(['small-changes', 'best-dates']),
  /** Stop was asked for; the instance running it stops within seconds. */
  cancelRequested: z.boolean().optional(),
})

/** A rule book finding as stored with a draft (see shared/domain/rules.ts). */
export const ruleViolation = z.custom<RuleViolation>(
  (v) => typeof v === 'object' && v !== null && typeof (v as { rule?: unknown }).rule === 'string' && typeof (v as { message?: unknown }).message === 'string',
  'must be a rule finding',
)
export const planScore = z.object({
  weightedTardiness: z.number().optional(),
  weightedTardinessHours: z.number().optional(),
  completion: z.string().nullable().optional(),
  moves: z.number().optional(),
  feasible: z.boolean().optional(),
  /** Rule book findings; drafts saved before findings were structured hold plain strings. */
  violations: z.array(z.union([ruleViolation, z.string()])).optional(),
  lateJobs: z.number().optional(),
  /** Working minutes late, summed over the late pieces, and the latest piece's; a working day is dayMinutes. */
  lateWorkingMinutes: z.number().optional(),
  worstLateWorkingMinutes: z.number().optional(),
  dayMinutes: z.number().optional(),
  jobs: z.number().optional(),
  operations: z.number().optional(),
  iterations: z.number().optional(),
  elapsedMs: z.number().optional(),
  basedOnPlanId: wireInt.nullable().optional(),
})
/** A plan version as publish and discard answer it (the stored row). */
export const planVersionRow = z.object({
  id: wireInt,
  number: wireInt,
  status: z.enum(['draft', 'published', 'superseded', 'discarded']),
  createdAt: isoDateTime,
  publishedAt: isoDateTime.nullable(),
  score: planScore,
  createdBy: wireInt.nullable(),
  publishedBy: wireInt.nullable(),
})
/** A plan version in the list, with who made and published it. */
export const planVersion = planVersionRow.extend({ createdByName: z.string().nullable(), publishedByName: z.string().nullable() })

/** Where a plan puts one operation, as the comparison answers it: the plan's own record (planAssignment above). */
export const assignment = planAssignment
export const planMove = z.object({
  operationId: wireInt,
  /** The step's job bag and name, as people know the work (absent only for a step no longer in the workshop). */
  jobBagId: wireInt.optional(),
  jobBagNumber: z.string().optional(),
  name: z.string().optional(),
  from: planAssignment.nullable(),
  to: planAssignment.nullable(),
  change: z.array(z.enum(['new', 'dropped', 'bench', 'person', 'time'])),
})
export const planComparison = z.object({
  planId: wireInt,
  against: z.union([wireInt, z.literal('live')]),
  moves: z.array(planMove),
  counts: z.object({ bench: wireInt, person: wireInt, time: wireInt, new: wireInt }),
  /**
   * Steps of the draft started at the bench, sent out or finished after the draft was made: publishing leaves them where they
   * really are (0 when compared with another version).
   */
  underWay: wireInt.optional(),
  /**
   * Job bags planned in both: finishing earlier / later; less / more late than promised (lateness shrinks or grows, whether
   * or not they were late before); and late in the draft only (newly late) or in the base only (no longer late).
   */
  gains: z.object({
    earlier: wireInt,
    later: wireInt,
    lessLate: wireInt,
    moreLate: wireInt,
    newlyLate: wireInt.optional(),
    noLongerLate: wireInt.optional(),
    /** Job bags the draft plans that the base holds none of (new work), and how many of those are late in the draft. */
    newPieces: wireInt.optional(),
    newPiecesLate: wireInt.optional(),
  }),
})
/** The answer to a move by hand: the operation's new planned place. */
export const moveResult = z.object({
  id: wireInt,
  version: wireInt,
  benchId: wireInt.nullable(),
  personId: wireInt.nullable(),
  start: isoDateTime.nullable(),
  end: isoDateTime.nullable(),
  pinned: z.boolean(),
})

export const loadCell = z.object({ day: isoDate, week: z.string(), plannedMinutes: z.number(), availableMinutes: z.number(), operationIds: z.array(wireInt) })
/**
 * One row of the week load. A bench's or a person's cell is their planned work against their own working time; a skill's is its
 * planned work against what its holders have left once their work of other kinds is planned (so one person's day is not offered
 * to each of their skills at once).
 */
export const loadRow = z.object({ type: z.enum(['bench', 'skill', 'person']), id: wireInt, name: z.string(), cells: z.array(loadCell) })
export const weekLoad = z.object({
  from: isoDate,
  to: isoDate,
  days: z.array(isoDate),
  weeks: z.array(z.object({ week: z.string(), days: z.array(isoDate) })),
  rows: z.array(loadRow),
  /**
   * The moment today's cells count from: the working time before it today is left out of both available and planned. Null when
   * none of today's working time has passed yet (before opening, or today is not in the range): every day counts in full.
   */
  countedFrom: isoDateTime.nullable(),
  /** Share of the available hours the workshop means to fill (0..1); above it a cell counts as overloaded. */
  planningLoad: z.number(),
})

export type RunProgress = z.infer<typeof runProgress>
export type PlanRun = z.infer<typeof planRun>
export type PlanScore = z.infer<typeof planScore>
export type PlanVersionRow = z.infer<typeof planVersionRow>
export type PlanVersion = z.infer<typeof planVersion>
export type Assignment = z.infer<typeof assignment>
export type PlanMove = z.infer<typeof planMove>
export type PlanComparison = z.infer<typeof planComparison>
export type MoveResult = z.infer<typeof moveResult>
export type LoadCell = z.infer<typeof loadCell>
export type LoadRow = z.infer<typeof loadRow>
export type WeekLoad = z.infer<typeof weekLoad>
