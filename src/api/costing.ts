// Costing API: an order's cost and margin at estimate and at actual, and the estimated cost of pieces not yet ordered.
import type { CostingEstimate, CostingEstimateInput, OrderCosting } from '@shared/schemas/costing'
import { api } from './client'

export const getOrderCosting = (orderId: number) => api.get<OrderCosting>(`/orders/${orderId}/costing`)
export const estimateCost = (body: CostingEstimateInput) => api.post<CostingEstimate>('/costing/estimate', body)
