// Orders API: paged list, one order with its job bags and operations, taking and changing orders, the customer's pieces an order holds.
import { z } from 'zod'
import { heldPiece } from '@shared/schemas/metal'
import { orderDetail, orderSummaryPage, type OrderInput, type OrderUpdate } from '@shared/schemas/order'
import { api } from './client'
import type { ListParams } from './customers'

export type { OrderDetail, OrderJobBag, OrderOperation } from '@shared/schemas/order'

/** `status`: one status or several separated by commas. */
export const listOrders = (p: ListParams & { status?: string } = {}) => api.get('/orders', { query: { ...p }, schema: orderSummaryPage })
export const getOrder = (id: number) => api.get(`/orders/${id}`, { schema: orderDetail })
export const createOrder = (body: OrderInput) => api.post('/orders', body, { schema: orderDetail })
export const updateOrder = (id: number, body: OrderUpdate) => api.patch(`/orders/${id}`, body, { schema: orderDetail })
/** The customer's own pieces the order holds in the workshop (what cancelling it hands back). */
export const orderCustomersMetal = (id: number) => api.get(`/orders/${id}/customers-metal`, { schema: z.array(heldPiece) })
