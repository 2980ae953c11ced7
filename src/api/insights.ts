// Insights API: estimate-vs-actual tables, chart data, drill-down, job costing, learned estimates and accepting them.
import type {
  AcceptSuggestionInput,
  BiasTrend,
  ComparisonTable,
  CostingTable,
  DrillDown,
  Grouping,
  InsightFilter,
  LearnedEstimates,
  ScatterPoint,
  StepChange,
  ThreePointInput,
} from '@shared/schemas/insights'
import type { Estimate } from '@shared/domain/estimate'
import { api, type Query } from './client'

const q = (f: InsightFilter): Query => ({ from: f.from, to: f.to, templateId: f.templateId })

export const getComparison = (groupBy: Grouping, f: InsightFilter) => api.get<ComparisonTable>('/insights/comparison', { query: { groupBy, ...q(f) } })
export const getScatter = (f: InsightFilter) => api.get<ScatterPoint[]>('/insights/scatter', { query: q(f) })
export const getBiasTrend = (f: InsightFilter) => api.get<BiasTrend>('/insights/bias-trend', { query: q(f) })
export const getDrillDown = (groupBy: Grouping, key: string, f: InsightFilter) => api.get<DrillDown>('/insights/records', { query: { groupBy, key, ...q(f) } })
export const getCosting = (f: InsightFilter) => api.get<CostingTable>('/insights/costing', { query: q(f) })
export const getLearned = (f: InsightFilter = {}) => api.get<LearnedEstimates>('/estimates/learned', { query: q(f) })
export const getStepChanges = () => api.get<StepChange[]>('/estimates/changes')
export const acceptSuggestion = (body: AcceptSuggestionInput) => api.post<StepChange>('/estimates/accept', body)
export const threePoint = (body: ThreePointInput) => api.post<Extract<Estimate, { source: 'three-point' }>>('/estimates/three-point', body)

/** Address of a table as a CSV file (same-origin GET: the session cookie goes along, no token needed). */
export function csvUrl(path: '/insights/comparison' | '/insights/costing' | '/insights/records', query: Query): string {
  const qs = new URLSearchParams()
  for (const [k, v] of Object.entries({ ...query, format: 'csv' })) if (v !== undefined && v !== null && v !== '') qs.set(k, String(v))
  return `/api${path}?${qs.toString()}`
}
export const comparisonCsvUrl = (groupBy: Grouping, f: InsightFilter) => csvUrl('/insights/comparison', { groupBy, ...q(f) })
export const costingCsvUrl = (f: InsightFilter) => csvUrl('/insights/costing', q(f))
export const drillCsvUrl = (groupBy: Grouping, key: string, f: InsightFilter) => csvUrl('/insights/records', { groupBy, key, ...q(f) })

/** An outside step's expected cost per unit in integer minor units of `currency` (null: not set). */
export interface StepCost {
  templateId: number
  templateName: string
  stepKey: string
  stepName: string
  leadDays: number
  outsideCostMinor: number | null
  currency: string
}
export const getStepCosts = () => api.get<StepCost[]>('/insights/outside-costs')
export const setStepCost = (templateId: number, stepKey: string, outsideCostMinor: number | null) =>
  api.put<{ templateId: number; stepKey: string; outsideCostMinor: number | null }>(`/insights/routings/${templateId}/outside-cost`, {
    stepKey,
    outsideCostMinor,
  })
