// Pause reasons: everyone reads the workshop's list (bench dialog, job bag history); the owner adds and changes them.
import { EVERYONE } from '../../shared/domain/roles'
import { z } from 'zod'
import { pauseReason, pauseReasonInput, pauseReasonUpdate } from '../../shared/schemas/pause-reason'
import { route } from '../lib/route'
import * as reasons from '../services/pause-reasons'
import { idParam } from './params'

export const pauseReasonRoutes = [
  route({
    method: 'get',
    path: '/pause-reasons',
    roles: EVERYONE,
    summary: 'The workshop’s pause reasons, switched-off ones included',
    response: z.array(pauseReason),
    handler: ({ deps, actor }) => reasons.listPauseReasons(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/pause-reasons',
    roles: ['owner'],
    status: 201,
    summary: 'Add a pause reason (owner)',
    body: pauseReasonInput,
    response: pauseReason,
    handler: ({ deps, actor, body }) => reasons.createPauseReason(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/pause-reasons/:id',
    roles: ['owner'],
    summary: 'Rename a pause reason, say whether it needs a note, switch it on or off (owner)',
    params: idParam,
    body: pauseReasonUpdate,
    response: pauseReason,
    handler: ({ deps, actor, params, body }) => reasons.updatePauseReason(deps, actor, params.id, body),
  }),
]
