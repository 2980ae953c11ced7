// The engine's contract: problem facts, planning results, scores and the input error, in integer minutes from problem.origin.
import type { RuleViolation } from '../../shared/domain/rules.ts'

/** Half-open time interval [start, end) in minutes from the problem origin. */
export type Interval = { start: number; end: number }

/** A bench (workstation); `available` is working time minus downtime and closures, sorted and disjoint. */
export interface Bench {
  id: string
  name: string
  available: Interval[]
}

/** A person at the bench; `available` is the weekly pattern minus leave and closures, sorted and disjoint. */
export interface Person {
  id: string
  name: string
  available: Interval[]
}

/** One way to carry out an operation: a bench, a person (either may be null) and the minutes it takes that pair. */
export interface OperationOption {
  benchId: string | null
  personId: string | null
  minutes: number
}

/** A pinned or running operation: it keeps its bench, person and start. */
export interface FixedPlacement {
  benchId: string | null
  personId: string | null
  start: number
  end?: number
}

/** One step of a job bag's routing. */
export interface Operation {
  id: string
  jobId: string
  name: string
  /** Operation kind code, e.g. 'setting'. */
  kind: string
  /** Operation ids in the same job; the graph may branch and join. */
  predecessors: string[]
  /** Feasible (bench, person) pairs with the duration for that pair. */
  options: OperationOption[]
  /** Outside work (casting, hallmarking): no bench, no person, lasts this many workshop working days. */
  outsideWorkingDays?: number
  /** Elapsed minutes after finishing that hold nothing but delay successors (pickle, glue cure). */
  waitAfter?: number
  /** Running or pinned by the manager. */
  fixed?: FixedPlacement
  /** Finished: ignored except as a satisfied predecessor. */
  done?: boolean
  /** When done work finished (minutes from origin); its waitAfter still holds successors until finishedAt + waitAfter. */
  finishedAt?: number
}

/** A job bag; weight is its priority, due null means no due date. */
export interface Job {
  id: string
  name: string
  release: number
  due: number | null
  weight: number
}

/** Everything the engine needs to plan a workshop. */
export interface Problem {
  /** ISO date of minute 0 (informational; used for human-readable day names). */
  origin: string
  /** Nothing new may start before this minute. */
  now: number
  /** End of the calendars; planning past it is reported as an error. */
  horizon: number
  /** The workshop's open days, for counting outside-work working days. */
  workshopDays: Interval[]
  benches: Bench[]
  people: Person[]
  jobs: Job[]
  operations: Operation[]
  /** Last published plan, for stability. */
  previous?: Record<string, { benchId: string | null; personId: string | null; start: number }>
}

/** Why an operation starts when it does. */
export type StartReason = {
  kind: 'release' | 'predecessor' | 'bench' | 'person' | 'working-time' | 'fixed' | 'now' | 'by-hand' | 'kept'
  /** Human-readable, e.g. "waiting for Ada (setting) until Thu 14:00". */
  detail: string
  /** The operation (or resource) that holds this one back, if any. */
  blockerId?: string
}

export interface PlannedOperation {
  operationId: string
  jobId: string
  benchId: string | null
  personId: string | null
  start: number
  end: number
  /** The worked stretches; more than one when working time interrupts the work. */
  segments: Interval[]
  reason: StartReason
}

export interface Score {
  weightedTardiness: number
  makespan: number
  /** Previously planned operations now on another bench or with another person. */
  moves: number
  /** Previously planned operations kept on their bench and person but starting at another minute. */
  shifted?: number
  feasible: boolean
  /** What the rule book found (hard ones make the plan infeasible); empty while searching. */
  violations: Violation[]
}

export interface Plan {
  operations: PlannedOperation[]
  jobs: { jobId: string; completion: number; lateness: number; tardiness: number }[]
  score: Score
  /** evaluations: candidate schedules evaluated exactly, where the search counts them. */
  stats: {
    iterations: number
    elapsedMs: number
    firstPlanMs: number
    evaluations?: number
    /** The previous plan kept as it is (re-timed from now): what a new plan must beat to be worth its changes. */
    previous?: { weightedTardiness: number; makespan: number }
  }
}

export type Objective = 'weightedTardiness' | 'makespan' | 'moves' | 'shifted'

/** With a previous plan: 'small-changes' buys a change only with less lateness; 'best-dates' also with an earlier finish. */
export type Stability = 'small-changes' | 'best-dates'

export interface SolveOptions {
  seed: number
  timeLimitMs: number
  /**
   * Lexicographic order; default ['weightedTardiness', 'makespan', 'moves'], and with a previous plan by `stability`:
   * small-changes ['weightedTardiness', 'moves', 'shifted', 'makespan'], best-dates ['weightedTardiness', 'makespan', 'moves', 'shifted'].
   */
  objective?: Objective[]
  stability?: Stability
  maxIterations?: number
}

/** Which part of the workshop search reported: the first plan, the calendar-free sketch, the calendar graph, the decoder's search. */
export type SolveStage = 'start' | 'sketch' | 'graph' | 'decoder'

/** Progress report during a solve. */
export interface SolveProgress {
  /** Plans tried so far: in the workshop search every candidate evaluated (moves on the sketch and the graph, and decodes). */
  iteration: number
  best: Score
  elapsedMs: number
  stage?: SolveStage
}

/** Caller-supplied hooks: progress, cancellation and the clock (milliseconds). */
export interface SolveHooks {
  onProgress?(p: SolveProgress): void
  shouldStop?(): boolean
  /** Milliseconds; defaults to performance.now. */
  clock?(): number
}

/** One finding of the rule book (shared/domain/rules.ts): rule name, hard or soft, the step and job concerned, a message. */
export type Violation = RuleViolation

export type SchedulingInputErrorCode =
  | 'no-option'
  | 'routing-cycle'
  | 'unknown-predecessor'
  | 'foreign-predecessor'
  | 'unknown-job'
  | 'unknown-resource'
  | 'duplicate-id'
  | 'fixed-outside-working-time'
  | 'fixed-overlap'
  | 'bad-duration'
  | 'beyond-horizon'
  | 'bad-calendar'

/** Bad input to the engine: names the job and operation concerned. */
export class SchedulingInputError extends Error {
  readonly code: SchedulingInputErrorCode
  readonly jobId: string | undefined
  readonly operationId: string | undefined
  constructor(opts: { code: SchedulingInputErrorCode; message: string; jobId?: string; operationId?: string }) {
    super(opts.message)
    this.name = 'SchedulingInputError'
    this.code = opts.code
    this.jobId = opts.jobId
    this.operationId = opts.operationId
  }
}
