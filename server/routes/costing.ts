// Costing routes: what an order costs at estimate and at actual, and the estimated cost of pieces not yet ordered (sales, manager, owner).
import type { Role } from '../../shared/domain/roles'
import { costingEstimate, costingEstimateInput, orderCosting } from '../../shared/schemas/costing'
import { route } from '../lib/route'
import * as costing from '../services/costing'
import { idParam } from './params'

// Those who quote a price see what it costs; the bench does not.
const FRONT: Role[] = ['owner', 'manager', 'sales']

export const costingRoutes = [
  route({
    method: 'get',
    path: '/orders/:id/costing',
    roles: FRONT,
    summary: 'An order’s cost (metal, stones, outside work, labour) and margin at estimate and at actual',
    params: idParam,
    response: orderCosting,
    handler: ({ deps, actor, params }) => costing.orderCosting(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/costing/estimate',
    roles: FRONT,
    summary: 'Estimated cost and suggested price of pieces not yet ordered',
    body: costingEstimateInput,
    response: costingEstimate,
    handler: ({ deps, actor, body }) => costing.estimate(deps.db, actor.workshopId, body),
  }),
]
