// Promise API: check a date for a prospective piece, turn it into an order, and an order's forecast.
import type { z } from 'zod'
import {
  orderForecast as orderForecastSchema,
  promiseAcceptResult,
  promiseCheckResult,
  type promiseCheckInput,
  type PromiseAcceptInput,
} from '@shared/schemas/promise'
import { api } from './client'

export type { PromiseAcceptResult, PromiseBooking } from '@shared/schemas/promise'
export type PromiseCheckRequest = z.input<typeof promiseCheckInput>

export const checkPromise = (body: PromiseCheckRequest) => api.post('/promise/check', body, { schema: promiseCheckResult })
export const acceptPromise = (body: PromiseAcceptInput) => api.post('/promise/accept', body, { schema: promiseAcceptResult })
export const orderForecast = (orderId: number) => api.get(`/orders/${orderId}/forecast`, { schema: orderForecastSchema })
