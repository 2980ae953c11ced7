// Insights: the filter, the estimate-vs-actual table of each grouping, chart data, job costing, learned suggestions and the drill-down.
import { defineStore } from 'pinia'
import { reactive, ref } from 'vue'
import type {
  BiasTrend,
  ComparisonTable,
  CostingTable,
  DrillDown,
  Grouping,
  InsightFilter,
  LearnedEstimates,
  ScatterPoint,
  StepChange,
  StepSuggestion,
} from '@shared/schemas/insights'
import * as insightsApi from '@/api/insights'
import { messageOf } from '@/composables/use-api-error'

export const useInsightsStore = defineStore('insights', () => {
  /** Date range (local days, inclusive) and routing the figures are limited to. */
  const filter = reactive<InsightFilter>({})
  /** The grouping shown in the comparison table. */
  const groupBy = ref<Grouping>('kind')
  /** Tables by grouping, for the current filter. */
  const tables = reactive<Partial<Record<Grouping, ComparisonTable>>>({})
  const scatter = ref<ScatterPoint[]>([])
  const trend = ref<BiasTrend | null>(null)
  const costing = ref<CostingTable | null>(null)
  const learned = ref<LearnedEstimates | null>(null)
  const changes = ref<StepChange[]>([])
  /** The row opened in the drawer. */
  const drill = ref<DrillDown | null>(null)
  const loading = ref(false)
  const error = ref<string | null>(null)

  const current = () => ({ ...filter })

  async function loadTable(g: Grouping = groupBy.value) {
    tables[g] = await insightsApi.getComparison(g, current())
  }
  /** Reloads everything the screen shows for the current filter. */
  async function load() {
    loading.value = true
    error.value = null
    try {
      for (const k of Object.keys(tables) as Grouping[]) delete tables[k]
      const f = current()
      const [table, points, t, c, l, ch] = await Promise.all([
        insightsApi.getComparison(groupBy.value, f),
        insightsApi.getScatter(f),
        insightsApi.getBiasTrend(f),
        insightsApi.getCosting(f),
        insightsApi.getLearned(),
        insightsApi.getStepChanges(),
      ])
      tables[groupBy.value] = table
      scatter.value = points
      trend.value = t
      costing.value = c
      learned.value = l
      changes.value = ch
    } catch (err) {
      error.value = messageOf(err)
      throw err
    } finally {
      loading.value = false
    }
  }
  async function setGrouping(g: Grouping) {
    groupBy.value = g
    if (!tables[g]) await loadTable(g)
  }
  async function openDrill(g: Grouping, key: string) {
    drill.value = await insightsApi.getDrillDown(g, key, current())
  }
  /** Accepts a learned suggestion into its routing step; learned figures and history reload. */
  async function accept(s: StepSuggestion, values: { baseMinutes: number; perStoneMinutes: number }, reason = '') {
    const change = await insightsApi.acceptSuggestion({ routingId: s.routingId, stepKey: s.stepKey, routingVersion: s.routingVersion, reason, ...values })
    const [l, ch] = await Promise.all([insightsApi.getLearned(), insightsApi.getStepChanges()])
    learned.value = l
    changes.value = ch
    return change
  }

  return { filter, groupBy, tables, scatter, trend, costing, learned, changes, drill, loading, error, load, loadTable, setGrouping, openDrill, accept }
})
