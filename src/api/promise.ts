// Promise API: check a date for a prospective piece, turn it into an order, and an order's forecast.
import type { OrderForecast, PromiseAcceptInput, PromiseCheckResult } from '@shared/schemas/promise'
import type { z } from 'zod'
import type { promiseCheckInput } from '@shared/schemas/promise'
import { api } from './client'
import type { OrderDetail } from './orders'

export type PromiseCheckRequest = z.input<typeof promiseCheckInput>
/** Whether taking the order booked its steps into the live plan (where the promise found room), and if not, why. */
export type PromiseBooking = { booked: true; start: string; end: string; startDate: string; endDate: string; steps: number } | { booked: false; reason: string }
export interface PromiseAcceptResult {
  order: OrderDetail
  booking: PromiseBooking
  confirmation: { id: number; status: string; error: string | null }
}

export const checkPromise = (body: PromiseCheckRequest) => api.post<PromiseCheckResult>('/promise/check', body)
export const acceptPromise = (body: PromiseAcceptInput) => api.post<PromiseAcceptResult>('/promise/accept', body)
export const orderForecast = (orderId: number) => api.get<OrderForecast>(`/orders/${orderId}/forecast`)
