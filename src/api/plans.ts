// Planning API: planner runs, plan versions and comparisons, the board window, moves by hand and the week load.
import { z } from 'zod'
import {
  moveResult,
  planComparison,
  planRun,
  planVersion,
  planVersionRow,
  weekLoad,
  type MoveInput,
  type PlanRun,
  type PlanRunInput,
} from '@shared/schemas/plan'
import { boardAnswer } from '@shared/schemas/board'
import { api } from './client'

// The answers' types are declared once, with their schemas, in shared/schemas (board.ts and plan.ts).
export type { BoardData, BoardItem, BoardJob, BoardPlanRef, JobState, StartReason } from '@shared/schemas/board'
export type {
  Assignment,
  LoadCell,
  LoadRow,
  MoveResult,
  PlanComparison,
  PlanMove,
  PlanRun,
  PlanScore,
  PlanVersion,
  PlanVersionRow,
  RunProgress,
  WeekLoad,
} from '@shared/schemas/plan'

/** A run still waiting or solving (the dialog shows its progress, a second run is refused). */
export const runActive = (r: Pick<PlanRun, 'status'> | null | undefined) => r?.status === 'queued' || r?.status === 'running'

export interface WindowQuery {
  from: string
  to: string
  planId?: number
}

const planVersions = z.array(planVersion)

export const startRun = (body: PlanRunInput) => api.post('/plans/runs', body, { schema: planRun })
export const getRun = (runId: string) => api.get(`/plans/runs/${runId}`, { schema: planRun })
export const stopRun = (runId: string) => api.delete(`/plans/runs/${runId}`, { schema: planRun })
export const listPlans = () => api.get('/plans', { schema: planVersions })
export const comparePlan = (id: number, against?: number) => api.get(`/plans/${id}/compare`, { query: { against }, schema: planComparison })
export const publishPlan = (id: number) => api.post(`/plans/${id}/publish`, undefined, { schema: planVersionRow })
export const discardPlan = (id: number) => api.post(`/plans/${id}/discard`, undefined, { schema: planVersionRow })
export const getBoard = (q: WindowQuery) => api.get('/board', { query: { ...q }, schema: boardAnswer })
export const moveOperation = (id: number, body: MoveInput) => api.patch(`/board/operations/${id}`, body, { schema: moveResult })
export const getLoad = (q: WindowQuery) => api.get('/load', { query: { ...q }, schema: weekLoad })
