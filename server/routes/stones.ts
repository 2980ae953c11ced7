// Stone routes: a piece's stone list (front office and managers edit, everyone reads), counts to and from the setter, corrections, hand-back.
import {
  jobBagStones,
  stoneCheckBackInput,
  stoneCorrectionInput,
  stoneLineInput,
  stoneLineRemoveQuery,
  stoneLineUpdate,
  stoneMovementInput,
} from '../../shared/schemas/stone'
import { EVERYONE, type Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import * as stones from '../services/stones'
import { idParam } from './params'

/** Who writes the stone list: the owner, the manager and sales (who take the order and the customer's stones). */
const LIST_EDITORS: Role[] = ['owner', 'manager', 'sales']
/** Who counts stones out and back: the bench (the setter) and the managers. */
const COUNTERS: Role[] = ['owner', 'manager', 'bench']
const CORRECTORS: Role[] = ['owner', 'manager']

export const stoneRoutes = [
  route({
    method: 'get',
    path: '/job-bags/:id/stones',
    roles: EVERYONE,
    summary: 'A job bag’s stone list with the counts to and from the setter',
    params: idParam,
    response: jobBagStones,
    handler: ({ deps, actor, params }) => stones.getStones(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/job-bags/:id/stones',
    roles: LIST_EDITORS,
    status: 201,
    summary: 'Add a line to the stone list (carats estimated for round stones when not entered)',
    params: idParam,
    body: stoneLineInput,
    response: jobBagStones,
    handler: ({ deps, actor, params, body }) => stones.addLine(deps, actor, params.id, body),
  }),
  route({
    method: 'patch',
    path: '/stones/:id',
    roles: LIST_EDITORS,
    summary: 'Change a line of the stone list',
    params: idParam,
    body: stoneLineUpdate,
    response: jobBagStones,
    handler: ({ deps, actor, params, body }) => stones.updateLine(deps, actor, params.id, body),
  }),
  route({
    method: 'delete',
    path: '/stones/:id',
    roles: LIST_EDITORS,
    summary: 'Remove a line nobody has counted out',
    params: idParam,
    query: stoneLineRemoveQuery,
    response: jobBagStones,
    handler: ({ deps, actor, params, query }) => stones.removeLine(deps, actor, params.id, query.version),
  }),
  route({
    method: 'post',
    path: '/stones/:id/movements',
    roles: COUNTERS,
    status: 201,
    summary: 'Count stones out to the setter or back (set, returned, broken, lost)',
    params: idParam,
    body: stoneMovementInput,
    response: jobBagStones,
    handler: ({ deps, actor, params, body }) => stones.recordCounts(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/stone-movements/:id/corrections',
    roles: CORRECTORS,
    status: 201,
    summary: 'Correct a count (kept with who and why)',
    params: idParam,
    body: stoneCorrectionInput,
    response: jobBagStones,
    handler: ({ deps, actor, params, body }) => stones.correctMovement(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/stones/:id/check-back',
    roles: LIST_EDITORS,
    status: 201,
    summary: 'Hand the customer’s own stones back at collection',
    params: idParam,
    body: stoneCheckBackInput,
    response: jobBagStones,
    handler: ({ deps, actor, params, body }) => stones.checkBack(deps, actor, params.id, body),
  }),
]
