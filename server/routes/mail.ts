// Mail routes: the outbox (what was sent, with a preview) and sending the managers' at-risk digest now.
import * as digest from '../services/digest'
import { z } from 'zod'
import type { Role } from '../../shared/domain/roles'
import { id } from '../../shared/schemas/common'
import { atRiskDigestSent, outboxMessage, outboxPage } from '../../shared/schemas/mail'
import { route } from '../lib/route'
import * as mail from '../services/mail'
import { idParam } from './params'

const FRONT: Role[] = ['owner', 'manager', 'sales']
const outboxQuery = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
  kind: z.string().max(40).optional(),
  orderId: id.optional(),
})

export const mailRoutes = [
  route({
    method: 'get',
    path: '/outbox',
    roles: FRONT,
    summary: 'Messages sent by the workshop, newest first',
    query: outboxQuery,
    response: outboxPage,
    handler: ({ deps, actor, query }) => mail.listOutbox(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/outbox/:id',
    roles: FRONT,
    summary: 'One message with its text and HTML',
    params: idParam,
    response: outboxMessage,
    handler: ({ deps, actor, params }) => mail.getOutboxMessage(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/mail/at-risk-digest',
    roles: ['owner', 'manager'],
    summary: 'Send the managers the digest of job bags at risk now',
    response: atRiskDigestSent,
    handler: ({ deps, actor }) => digest.sendAtRiskDigest(deps, actor.workshopId),
  }),
]
