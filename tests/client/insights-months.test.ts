// Insights by month: a month reads "Dec 2026", as the app writes dates ("D MMM YYYY"), in the table, the drill-down's title and the chart.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { ComparisonRow, ComparisonTable, DrillDown } from '@shared/schemas/insights'
import { formatMonth } from '@/composables/use-workshop-time'
import InsightsComparisonTable from '@/components/insights/InsightsComparisonTable.vue'
import InsightsDrillDrawer from '@/components/insights/InsightsDrillDrawer.vue'

const row = (key: string): ComparisonRow => ({
  key,
  label: key,
  n: 3,
  estimateHours: 6,
  actualHours: 7.5,
  biasHours: 1.5,
  biasPct: 25,
  direction: 'over',
  mapePct: 20,
  leftOut: 0,
})

describe('months on Insights', () => {
  it('when a month is 2026-12 or 2027-01, then it reads Dec 2026 or Jan 2027; anything else is left as it is', () => {
    expect(formatMonth('2026-12')).toBe('Dec 2026')
    expect(formatMonth('2027-01')).toBe('Jan 2027')
    expect(formatMonth('Ring sizing')).toBe('Ring sizing')
  })

  it('when the table is by month, then its rows read Nov 2026 and Dec 2026, in time order', async () => {
    const table: ComparisonTable = { groupBy: 'month', filter: {} as ComparisonTable['filter'], rows: [row('2026-11'), row('2026-12')], total: row('total') }
    const w = mount(InsightsComparisonTable, { props: { table, label: 'By month', groupBy: 'month' }, global: { plugins: [ElementPlus] } })
    await flushPromises()
    const first = w.findAll('[data-test=insights-comparison] tbody tr').map((r) => r.find('td').text())
    expect(first).toEqual(['Nov 2026', 'Dec 2026'])
  })

  it('when December is drilled into, then the drawer is titled “Time behind: Dec 2026”', async () => {
    const drill: DrillDown = { groupBy: 'month', key: '2026-12', label: '2026-12', operations: [] }
    mount(InsightsDrillDrawer, { props: { drill, filter: {} as never }, global: { plugins: [createPinia(), ElementPlus] }, attachTo: document.body })
    await flushPromises()
    expect(document.body.querySelector('[data-test=insights-drill] .el-drawer__title')?.textContent).toBe('Time behind: Dec 2026')
  })
})
