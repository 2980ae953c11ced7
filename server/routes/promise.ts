// Promise routes: check a date for a prospective piece, turn it into an order, and the forecast of an existing order.
import type { Role } from '../../shared/domain/roles'
import { orderForecast, promiseAcceptInput, promiseAcceptResult, promiseCheckInput, promiseCheckResult } from '../../shared/schemas/promise'
import { route } from '../lib/route'
import * as promises from '../services/promise'
import * as forecasts from '../services/order-forecast'
import { idParam } from './params'

const FRONT: Role[] = ['owner', 'manager', 'sales']

export const promiseRoutes = [
  route({
    method: 'post',
    path: '/promise/check',
    roles: FRONT,
    summary: 'Earliest completion of a prospective piece (fixed plan / re-planned), optionally with its P50/P80/P95 range',
    body: promiseCheckInput,
    response: promiseCheckResult,
    handler: ({ deps, actor, body }) => promises.checkPromise(deps, actor, body),
  }),
  route({
    method: 'post',
    path: '/promise/accept',
    roles: FRONT,
    status: 201,
    summary: 'Turn a checked promise into an order with that promised date, and confirm it to the customer by e-mail',
    body: promiseAcceptInput,
    response: promiseAcceptResult,
    handler: ({ deps, actor, body }) => promises.acceptPromise(deps, actor, body),
  }),
  route({
    method: 'get',
    path: '/orders/:id/forecast',
    roles: FRONT,
    summary: 'Expected completion of each job bag of an order on the live plan, at risk or late, and why',
    params: idParam,
    response: orderForecast,
    handler: ({ deps, actor, params }) => forecasts.orderForecast(deps, actor, params.id),
  }),
]
