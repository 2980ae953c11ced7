// Planning API: planner runs, plan versions and comparisons, the board window, moves by hand and the week load.
import type { MoveInput, PlanRunInput } from '@shared/schemas/plan'
import type { BoardActual, BoardPlanned } from '@shared/schemas/board'
import type { RuleViolation } from '@shared/domain/rules'
import { api } from './client'

/** Why the engine started an operation when it did, e.g. "waiting for Ines Harrowby (setting) until Thu 14:00". */
export interface StartReason {
  kind: 'release' | 'predecessor' | 'bench' | 'person' | 'working-time' | 'fixed' | 'now' | 'by-hand'
  detail: string
  blockerId?: string
}

/** One bar of the board: an operation with its planned bench, person and times. */
export interface BoardItem {
  id: number
  jobBagId: number
  jobBagNumber: string
  piece: string
  orderId: number
  orderNumber: string
  customerName: string
  name: string
  kind: string
  kindName: string
  color: string
  hazards: string[]
  outside: boolean
  status: string
  benchId: number | null
  personId: number | null
  start: string
  end: string
  pinned: boolean
  version: number
  estimateMinutes: number
  requiredLevel: number
  reason: StartReason | null
  late: boolean
  /** The plan's times for the step (a finished step keeps the plan it had). */
  planned: BoardPlanned | null
  /** What happened, from the time records: first start, last finish (null while running), minutes worked. */
  actual: BoardActual | null
}

export type JobState = 'late' | 'at-risk' | 'on-time' | 'unplanned'

export interface BoardJob {
  jobBagId: number
  number: string
  piece: string
  orderNumber: string
  customerName: string
  due: string
  expectedCompletion: string | null
  latenessMinutes: number
  /** Working minutes late (negative: to spare) in the workshop's open hours. */
  lateWorkingMinutes: number
  state: JobState
  reason: string | null
}

export interface BoardPlanRef {
  id: number
  number: number
  status: string
  publishedAt: string | null
}

export interface BoardData {
  window: { from: string; to: string; timeZone: string }
  now: string
  plan: BoardPlanRef | null
  /** `kinds`: operation kind codes the bench can host. */
  benches: { id: number; name: string; kind: string; kinds: string[] }[]
  /** `skills`: operation kind code → level. */
  people: { id: number; name: string; skills: Record<string, number> }[]
  items: BoardItem[]
  jobs: BoardJob[]
  nonWorking: { start: string; end: string }[]
  /** Open minutes of a typical working day, for "2 working days 3 h". */
  dayMinutes: number
  closures: { name: string; startsOn: string; endsOn: string }[]
  leave: { personId: number; startsOn: string; endsOn: string; reason: string | null }[]
  downtime: { benchId: number; startsAt: string; endsAt: string; reason: string | null }[]
}

export interface PlanScore {
  weightedTardiness?: number
  weightedTardinessHours?: number
  completion?: string
  moves?: number
  feasible?: boolean
  /** Rule book findings; drafts saved before findings were structured hold plain strings. */
  violations?: (RuleViolation | string)[]
  lateJobs?: number
  /** Working minutes late, summed over the late pieces, and the latest piece's; a working day is dayMinutes. */
  lateWorkingMinutes?: number
  worstLateWorkingMinutes?: number
  dayMinutes?: number
  jobs?: number
  operations?: number
  iterations?: number
  elapsedMs?: number
  basedOnPlanId?: number | null
}

export interface PlanVersion {
  id: number
  number: number
  status: 'draft' | 'published' | 'superseded' | 'discarded'
  createdAt: string
  publishedAt: string | null
  score: PlanScore
  createdBy: number | null
  publishedBy: number | null
  createdByName: string | null
  publishedByName: string | null
}

export interface RunProgress {
  iteration: number
  weightedTardiness: number
  makespan: number
  elapsedMs: number
}

export interface PlanRun {
  id: string
  /** queued: waiting for an app instance to take it; running: solving (on whichever instance took it). */
  status: 'queued' | 'running' | 'done' | 'cancelled' | 'failed'
  startedAt: string
  timeLimitSeconds: number
  progress: RunProgress | null
  planId: number | null
  error: string | null
  note: string | null
  stability: 'small-changes' | 'best-dates'
  /** Stop was asked for; the instance running it stops within seconds. */
  cancelRequested?: boolean
}

/** A run still waiting or solving (the dialog shows its progress, a second run is refused). */
export const runActive = (r: Pick<PlanRun, 'status'> | null | undefined) => r?.status === 'queued' || r?.status === 'running'

export interface Assignment {
  benchId: string | null
  personId: string | null
  start: string
  end: string
  reason: StartReason | null
}

export interface PlanMove {
  operationId: number
  from: Assignment | null
  to: Assignment | null
  change: ('new' | 'dropped' | 'bench' | 'person' | 'time')[]
}

export interface PlanComparison {
  planId: number
  against: number | 'live'
  moves: PlanMove[]
  counts: { bench: number; person: number; time: number; new: number }
  /** Job bags planned in both: finishing earlier / later, and less / more late than promised. */
  gains: { earlier: number; later: number; lessLate: number; moreLate: number }
}

export interface MoveResult {
  id: number
  version: number
  benchId: number | null
  personId: number | null
  start: string | null
  end: string | null
  pinned: boolean
}

export interface LoadCell {
  day: string
  week: string
  plannedMinutes: number
  availableMinutes: number
  operationIds: number[]
}

export interface LoadRow {
  type: 'bench' | 'skill'
  id: number
  name: string
  cells: LoadCell[]
}

export interface WeekLoad {
  from: string
  to: string
  days: string[]
  weeks: { week: string; days: string[] }[]
  rows: LoadRow[]
  /** Share of the available hours the workshop means to fill (0..1); above it a cell counts as overloaded. */
  planningLoad: number
}

export interface WindowQuery {
  from: string
  to: string
  planId?: number
}

export const startRun = (body: PlanRunInput) => api.post<PlanRun>('/plans/runs', body)
export const getRun = (runId: string) => api.get<PlanRun>(`/plans/runs/${runId}`)
export const stopRun = (runId: string) => api.delete<PlanRun>(`/plans/runs/${runId}`)
export const listPlans = () => api.get<PlanVersion[]>('/plans')
export const comparePlan = (id: number, against?: number) => api.get<PlanComparison>(`/plans/${id}/compare`, { against })
export const publishPlan = (id: number) => api.post<PlanVersion>(`/plans/${id}/publish`)
export const discardPlan = (id: number) => api.post<PlanVersion>(`/plans/${id}/discard`)
export const getBoard = (q: WindowQuery) => api.get<BoardData>('/board', { ...q })
export const moveOperation = (id: number, body: MoveInput) => api.patch<MoveResult>(`/board/operations/${id}`, body)
export const getLoad = (q: WindowQuery) => api.get<WeekLoad>('/load', { ...q })
