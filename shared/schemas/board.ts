// The board's answer: bars (planned, running and finished work), jobs at risk, rows and calendars for a window.
import { z } from 'zod'
import { isoDate, isoDateTime } from './common'
import { ruleViolation } from './plan'

/** What the plan says for a step: its planned start and end (a finished step keeps the plan it had). */
export const boardPlanned = z.object({ start: isoDateTime, end: isoDateTime })

/**
 * What really happened, from the step's time records (corrections applied, voided records left out):
 * the first start and the last finish (null while the work is still running), and the minutes worked.
 * Outside work has no time records: sent out and booked back, with no minutes worked (`fromRecords` false).
 */
export const boardActual = z.object({
  start: isoDateTime,
  end: isoDateTime.nullable(),
  workedMinutes: z.number().nonnegative(),
  records: z.number().int().nonnegative(),
  fromRecords: z.boolean(),
})

/** Why the engine started an operation when it did, e.g. "waiting for Ines Harrowby (setting) until Thu 14:00". */
export const startReason = z.object({
  kind: z.enum(['release', 'predecessor', 'bench', 'person', 'working-time', 'fixed', 'now', 'by-hand', 'kept']),
  detail: z.string(),
  /** The operation (or resource) that holds this one back, if any. */
  blockerId: z.string().optional(),
})
export const boardReason = startReason

export const boardItem = z.object({
  id: z.number().int(),
  jobBagId: z.number().int(),
  jobBagNumber: z.string(),
  piece: z.string(),
  orderId: z.number().int(),
  orderNumber: z.string(),
  customerName: z.string(),
  name: z.string(),
  kind: z.string(),
  kindName: z.string(),
  color: z.string(),
  hazards: z.array(z.string()),
  outside: z.boolean(),
  status: z.string(),
  benchId: z.number().int().nullable(),
  personId: z.number().int().nullable(),
  /** Where the bar is drawn: the plan for open work, the actual times for finished work, actual start to now (or planned end) while running. */
  start: isoDateTime,
  end: isoDateTime,
  pinned: z.boolean(),
  version: z.number().int(),
  estimateMinutes: z.number(),
  /** The planned person's speed factor for this kind of work (their minutes = estimate ÷ speed, rounded up); absent without one. */
  speed: z.number().positive().optional(),
  /** Outside work (casting, hallmarking): the working days it is away, when the step counts its time that way. */
  outsideDays: z.number().int().optional(),
  requiredLevel: z.number().int(),
  reason: boardReason.nullable(),
  /** The live plan's step no longer fits the calendar (a closure, leave or downtime added since): the rule book's finding. */
  broken: z.string().optional(),
  /** The bar ends after its job bag's due date (or promised date). */
  late: z.boolean(),
  /** Its job bag finishes after the due date: true on every bar of that bag, finished ones included. */
  lateJob: z.boolean(),
  /**
   * Planned bench work that pauses (the bench's or person's working time ends before it is done): the stretches it is really
   * worked, in order, from its bench's and person's joint working time. Absent when it is worked in one stretch.
   */
  segments: z
    .array(z.object({ start: isoDateTime, end: isoDateTime }))
    .min(2)
    .optional(),
  planned: boardPlanned.nullable(),
  actual: boardActual.nullable(),
})

export const boardJob = z.object({
  jobBagId: z.number().int(),
  number: z.string(),
  piece: z.string(),
  orderNumber: z.string(),
  customerName: z.string(),
  due: isoDate,
  expectedCompletion: isoDateTime.nullable(),
  latenessMinutes: z.number(),
  lateWorkingMinutes: z.number(),
  state: z.enum(['late', 'at-risk', 'on-time', 'unplanned']),
  reason: z.string().nullable(),
  /** Its steps still to come (not under way) that the plan shown has no bar for. */
  stepsOffPlan: z.number().int(),
})

export const boardPlanRef = z.object({ id: z.number().int(), number: z.number().int(), status: z.string(), publishedAt: isoDateTime.nullable() })

export const boardAnswer = z.object({
  window: z.object({ from: isoDate, to: isoDate, timeZone: z.string() }),
  now: isoDateTime,
  plan: boardPlanRef.nullable(),
  /** `kinds`: the operation kinds (codes) the bench can host. */
  benches: z.array(z.object({ id: z.number().int(), name: z.string(), kind: z.string(), kinds: z.array(z.string()) })),
  /** `skills`: operation kind code → level. */
  people: z.array(z.object({ id: z.number().int(), name: z.string(), skills: z.record(z.string(), z.number()) })),
  items: z.array(boardItem),
  /**
   * The live plan's findings against the calendar as it is now (steps lying in time no longer worked); empty for a draft and
   * for a live plan that fits. Job bags' finishes are then those of the live plan re-timed from now.
   */
  findings: z.array(ruleViolation).optional(),
  jobs: z.array(boardJob),
  /**
   * The stretches the workshop is shut (nights, breaks, weekends, closures) that reach into the window, whole: reckoned from its
   * calendar over the window and a week either side, whichever weeks are asked for, past ones included.
   */
  nonWorking: z.array(z.object({ start: isoDateTime, end: isoDateTime })),
  /**
   * Work in time the workshop is shut, within the window: someone's own hours (a person whose week has Saturday hours) and time
   * recorded at a bench (running work up to now) that begin while the workshop is shut, each up to its next opening or the end of
   * the day it begins on (the workshop's zone). "Working hours only" keeps these hours on the board.
   */
  shutWork: z.array(z.object({ start: isoDateTime, end: isoDateTime })).optional(),
  dayMinutes: z.number(),
  closures: z.array(z.object({ name: z.string(), startsOn: isoDate, endsOn: isoDate })),
  leave: z.array(z.object({ personId: z.number().int(), startsOn: isoDate, endsOn: isoDate, reason: z.string().nullable() })),
  downtime: z.array(z.object({ benchId: z.number().int(), startsAt: isoDateTime, endsAt: isoDateTime, reason: z.string().nullable() })),
})

export type BoardActual = z.infer<typeof boardActual>
export type BoardPlanned = z.infer<typeof boardPlanned>
export type BoardAnswer = z.infer<typeof boardAnswer>
/** The board's whole answer as the client holds it. */
export type BoardData = BoardAnswer
export type StartReason = z.infer<typeof startReason>
/** One bar of the board: an operation with its planned bench, person and times. */
export type BoardItem = z.infer<typeof boardItem>
export type BoardJob = z.infer<typeof boardJob>
export type JobState = BoardJob['state']
export type BoardPlanRef = z.infer<typeof boardPlanRef>
