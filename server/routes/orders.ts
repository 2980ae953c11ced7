// Order routes: list, read, create with pieces, change.
import { z } from 'zod'
import { listQuery } from '../../shared/schemas/common'
import { orderInput, orderUpdate } from '../../shared/schemas/order'
import { ORDER_STATUSES } from '../../shared/domain/status'
import type { Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import * as orders from '../services/orders'
import { idParam } from './params'

const FRONT: Role[] = ['owner', 'manager', 'sales']
const orderListQuery = listQuery.extend({ status: z.enum(ORDER_STATUSES).optional() })

export const orderRoutes = [
  route({ method: 'get', path: '/orders', roles: FRONT, summary: 'Orders (search, sort, pages)', query: orderListQuery, handler: ({ deps, actor, query }) => orders.listOrders(deps.db, actor.workshopId, query) }),
  route({ method: 'get', path: '/orders/:id', roles: FRONT, summary: 'One order with its job bags', params: idParam, handler: ({ deps, actor, params }) => orders.getOrder(deps.db, actor.workshopId, params.id) }),
  route({ method: 'post', path: '/orders', roles: FRONT, status: 201, summary: 'Take an order', body: orderInput, handler: ({ deps, actor, body }) => orders.createOrder(deps, actor, body) }),
  route({ method: 'patch', path: '/orders/:id', roles: FRONT, summary: 'Change an order', params: idParam, body: orderUpdate, handler: ({ deps, actor, params, body }) => orders.updateOrder(deps, actor, params.id, body) }),
]
