// Orders API: paged list, one order with its job bags and operations, taking and changing orders.
import type { Page } from '@shared/schemas/common'
import type { OrderInput, OrderSummary, OrderUpdate, PieceParams } from '@shared/schemas/order'
import type { OrderStatus } from '@shared/domain/status'
import { api } from './client'
import type { ListParams } from './customers'

export interface OrderOperation {
  id: number; jobBagId: number; seq: number; key: string; kindId: number; name: string; status: string
  estimateMinutes: number; requiredLevel: number; waitAfterMinutes: number; leadDays: number; after: string[]
  plannedBenchId: number | null; plannedPersonId: number | null; plannedStart: string | null; plannedEnd: string | null; finishedAt: string | null
}
export interface OrderJobBag { id: number; number: string; piece: string; templateId: number | null; params: PieceParams; status: string; operations: OrderOperation[] }
export interface OrderDetail {
  id: number; number: string; customerId: number; customerName: string; customerReference: string; title: string
  dueDate: string; promisedDate: string | null; priority: number; status: OrderStatus
  /** Integer minor units of `currency` (the workshop's). */
  priceQuotedMinor: number; currency: string; notes: string; version: number
  jobBags: OrderJobBag[]
}

/** `status`: one status or several separated by commas. */
export const listOrders = (p: ListParams & { status?: string } = {}) => api.get<Page<OrderSummary>>('/orders', { ...p })
export const getOrder = (id: number) => api.get<OrderDetail>(`/orders/${id}`)
export const createOrder = (body: OrderInput) => api.post<OrderDetail>('/orders', body)
export const updateOrder = (id: number, body: OrderUpdate) => api.patch<OrderDetail>(`/orders/${id}`, body)
