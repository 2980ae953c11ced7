// Planning routes: run the planner, drafts and published versions, the board, moves by hand, and the week load.
import type { Request, Response } from 'express'
import { z, type ZodType } from 'zod'
import type { Role } from '../../shared/domain/roles'
import {
  boardQuery,
  moveInput,
  moveResult,
  planComparison,
  planRun,
  planRunInput,
  planVersion,
  planVersionRow,
  weekLoad as weekLoadAnswer,
} from '../../shared/schemas/plan'
import { boardAnswer } from '../../shared/schemas/board'
import { id } from '../../shared/schemas/common'
import { checkAnswer, route } from '../lib/route'
import type { Deps } from '../lib/route'
import { boardData, cachedAnswer, weekLoad } from '../services/board'
import { moveAssignment as moveOperation } from '../planning/move'
import { cancelRun, getRun, startRun } from '../planning/runs'
import * as plans from '../planning/drafts'
import { idParam } from './params'

// The manager plans; the owner and sales look on (read-only board).
const PLANNER: Role[] = ['manager']
const VIEWERS: Role[] = ['owner', 'manager', 'sales']
const runParam = z.object({ runId: z.string().uuid('must be a run id') })

/** The board and the load answer themselves from the cache: their answer is checked when it is loaded (see checkAnswer). */
const checked = <T>(deps: Deps, label: string, schema: ZodType, answer: T): T => {
  if (deps.checkAnswers) checkAnswer(label, schema, answer)
  return answer
}

/** Answers from the cache, with an ETag so an unchanged board costs a 304. */
async function sendCached(req: Request, res: Response, deps: Deps, workshopId: number, key: string, load: () => Promise<unknown>) {
  const { json, gzip, etag } = await cachedAnswer(deps.cache, workshopId, key, load)
  res.setHeader('ETag', etag)
  res.setHeader('Cache-Control', 'private, no-cache')
  res.setHeader('Vary', 'Accept-Encoding')
  if (req.get('if-none-match') === etag) return void res.status(304).end()
  res.type('application/json')
  if (req.acceptsEncodings('gzip')) {
    res.setHeader('Content-Encoding', 'gzip')
    return void res.end(gzip)
  }
  res.send(json)
}

export const planRoutes = [
  route({
    method: 'post',
    path: '/plans/runs',
    roles: PLANNER,
    status: 202,
    summary: 'Queue a planner run (any instance takes it; worker thread); the result becomes a draft',
    body: planRunInput,
    response: planRun,
    handler: ({ deps, actor, body }) => startRun(deps, actor, body),
  }),
  route({
    method: 'get',
    path: '/plans/runs/:runId',
    roles: PLANNER,
    summary: 'A planner run: progress, result or error',
    params: runParam,
    response: planRun,
    handler: ({ deps, actor, params }) => getRun(deps.db, actor, params.runId),
  }),
  route({
    method: 'delete',
    path: '/plans/runs/:runId',
    roles: PLANNER,
    summary: 'Stop a planner run (the live plan is untouched)',
    params: runParam,
    response: planRun,
    handler: ({ deps, actor, params }) => cancelRun(deps, actor, params.runId),
  }),
  route({
    method: 'get',
    path: '/plans',
    roles: VIEWERS,
    summary: 'Plan versions with who and when',
    response: z.array(planVersion),
    handler: ({ deps, actor }) => plans.listPlans(deps.db, actor.workshopId),
  }),
  route({
    method: 'get',
    path: '/plans/:id/compare',
    roles: VIEWERS,
    summary: 'What a plan moves against the live plan (or ?against=id)',
    params: idParam,
    query: z.object({ against: id.optional() }),
    response: planComparison,
    handler: ({ deps, actor, params, query }) => plans.comparePlan(deps.db, actor.workshopId, params.id, query.against),
  }),
  route({
    method: 'post',
    path: '/plans/:id/publish',
    roles: PLANNER,
    summary: 'Publish a draft: it becomes the live plan',
    params: idParam,
    response: planVersionRow,
    handler: ({ deps, actor, params }) => plans.publishPlan(deps, actor, params.id),
  }),
  route({
    method: 'post',
    path: '/plans/:id/discard',
    roles: PLANNER,
    summary: 'Throw a draft away',
    params: idParam,
    response: planVersionRow,
    handler: ({ deps, actor, params }) => plans.discardPlan(deps, actor, params.id),
  }),
  route({
    method: 'get',
    path: '/board',
    roles: VIEWERS,
    summary: 'Board data for a window (live plan, or ?planId= a draft)',
    query: boardQuery,
    response: boardAnswer,
    handler: ({ req, res, deps, actor, query }) =>
      sendCached(req, res, deps, actor.workshopId, `board|${query.from}|${query.to}|${query.planId ?? ''}`, async () =>
        checked(deps, 'GET /board', boardAnswer, await boardData(deps.db, actor.workshopId, query)),
      ),
  }),
  route({
    method: 'patch',
    path: '/board/operations/:id',
    roles: PLANNER,
    summary: 'Move or pin one bar on the live plan',
    params: idParam,
    body: moveInput,
    response: moveResult,
    handler: ({ deps, actor, params, body }) => moveOperation(deps, actor, params.id, body),
  }),
  route({
    method: 'get',
    path: '/load',
    roles: VIEWERS,
    summary: 'Planned against available hours per bench and skill, per day and ISO week',
    query: boardQuery,
    response: weekLoadAnswer,
    handler: ({ req, res, deps, actor, query }) =>
      sendCached(req, res, deps, actor.workshopId, `load|${query.from}|${query.to}|${query.planId ?? ''}`, async () =>
        checked(deps, 'GET /load', weekLoadAnswer, await weekLoad(deps.db, actor.workshopId, query)),
      ),
  }),
]
