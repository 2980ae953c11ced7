// Order routes: list, read, create with pieces, change, and the customer's own pieces an order holds.
import { z } from 'zod'
import { listQuery } from '../../shared/schemas/common'
import { orderDetail, orderInput, orderSummaryPage, orderUpdate } from '../../shared/schemas/order'
import { heldPiece } from '../../shared/schemas/metal'
import { ORDER_STATUSES, type OrderStatus } from '../../shared/domain/status'
import type { Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import * as orders from '../services/orders'
import { idParam } from './params'

const FRONT: Role[] = ['owner', 'manager', 'sales']
// One status or several separated by commas (e.g. "quoted,open,in-work,ready" for the work still in the workshop).
const statusList = z
  .string()
  .max(200)
  .transform((s) => s.split(',').filter(Boolean) as OrderStatus[])
  .refine(
    (list) => list.length > 0 && list.every((s) => (ORDER_STATUSES as readonly string[]).includes(s)),
    `must be one of: ${ORDER_STATUSES.join(', ')} (several separated by commas)`,
  )
const orderListQuery = listQuery.extend({ status: statusList.optional() })

export const orderRoutes = [
  route({
    method: 'get',
    path: '/orders',
    roles: FRONT,
    summary: 'Orders (search, sort, pages)',
    query: orderListQuery,
    response: orderSummaryPage,
    handler: ({ deps, actor, query }) => orders.listOrders(deps, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/orders/:id',
    roles: FRONT,
    summary: 'One order with its job bags',
    params: idParam,
    response: orderDetail,
    handler: ({ deps, actor, params }) => orders.getOrder(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'get',
    path: '/orders/:id/customers-metal',
    roles: FRONT,
    summary: "The customer's own pieces an order holds (what cancelling it hands back)",
    params: idParam,
    response: z.array(heldPiece),
    handler: ({ deps, actor, params }) => orders.orderCustomersPieces(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/orders',
    roles: FRONT,
    status: 201,
    summary: 'Take an order',
    body: orderInput,
    response: orderDetail,
    handler: ({ deps, actor, body }) => orders.createOrder(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/orders/:id',
    roles: FRONT,
    summary: 'Change an order',
    params: idParam,
    body: orderUpdate,
    response: orderDetail,
    handler: ({ deps, actor, params, body }) => orders.updateOrder(deps, actor, params.id, body),
  }),
]
