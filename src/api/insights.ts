// Insights API: estimate-vs-actual tables, chart data, drill-down, job costing, learned estimates and accepting them.
import { z } from 'zod'
import {
  biasTrend,
  comparisonTable,
  costingTable,
  drillDown,
  learnedEstimates,
  scatterPoint,
  stepChange,
  stepCost,
  stepCostSet,
  threePointEstimate,
  type AcceptSuggestionInput,
  type Grouping,
  type InsightFilter,
  type ThreePointInput,
} from '@shared/schemas/insights'
import { api, type Query } from './client'

const q = (f: InsightFilter): Query => ({ from: f.from, to: f.to, routingId: f.routingId })

export const getComparison = (groupBy: Grouping, f: InsightFilter) => api.get('/insights/comparison', { query: { groupBy, ...q(f) }, schema: comparisonTable })
export const getScatter = (f: InsightFilter) => api.get('/insights/scatter', { query: q(f), schema: z.array(scatterPoint) })
export const getBiasTrend = (f: InsightFilter) => api.get('/insights/bias-trend', { query: q(f), schema: biasTrend })
export const getDrillDown = (groupBy: Grouping, key: string, f: InsightFilter) =>
  api.get('/insights/records', { query: { groupBy, key, ...q(f) }, schema: drillDown })
export const getCosting = (f: InsightFilter) => api.get('/insights/costing', { query: q(f), schema: costingTable })
export const getLearned = (f: InsightFilter = {}) => api.get('/estimates/learned', { query: q(f), schema: learnedEstimates })
export const getStepChanges = () => api.get('/estimates/changes', { schema: z.array(stepChange) })
export const acceptSuggestion = (body: AcceptSuggestionInput) => api.post('/estimates/accept', body, { schema: stepChange })
export const threePoint = (body: ThreePointInput) => api.post('/estimates/three-point', body, { schema: threePointEstimate })

/** Address of a table as a CSV file (same-origin GET: the session cookie goes along, no token needed). */
export function csvUrl(path: '/insights/comparison' | '/insights/costing' | '/insights/records', query: Query): string {
  const qs = new URLSearchParams()
  for (const [k, v] of Object.entries({ ...query, format: 'csv' })) if (v !== undefined && v !== null && v !== '') qs.set(k, String(v))
  return `/api${path}?${qs.toString()}`
}
export const comparisonCsvUrl = (groupBy: Grouping, f: InsightFilter) => csvUrl('/insights/comparison', { groupBy, ...q(f) })
export const costingCsvUrl = (f: InsightFilter) => csvUrl('/insights/costing', q(f))
export const drillCsvUrl = (groupBy: Grouping, key: string, f: InsightFilter) => csvUrl('/insights/records', { groupBy, key, ...q(f) })

export type { StepCost } from '@shared/schemas/insights'
export const getStepCosts = () => api.get('/insights/outside-costs', { schema: z.array(stepCost) })
export const setStepCost = (routingId: number, stepKey: string, outsideCostMinor: number | null) =>
  api.put(`/insights/routings/${routingId}/outside-cost`, { stepKey, outsideCostMinor }, { schema: stepCostSet })
