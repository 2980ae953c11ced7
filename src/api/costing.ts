// Costing API: an order's cost and margin at estimate and at actual, and the estimated cost of pieces not yet ordered.
import { costingEstimate, orderCosting, type CostingEstimateInput } from '@shared/schemas/costing'
import { api } from './client'

export const getOrderCosting = (orderId: number) => api.get(`/orders/${orderId}/costing`, { schema: orderCosting })
export const estimateCost = (body: CostingEstimateInput) => api.post('/costing/estimate', body, { schema: costingEstimate })
