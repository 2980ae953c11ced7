// The parts of ECharts the insights charts use, registered once (tree-shaken through echarts/core).
import { use } from 'echarts/core'
import { CanvasRenderer } from 'echarts/renderers'
import { LineChart, ScatterChart } from 'echarts/charts'
import { GridComponent, LegendComponent, MarkLineComponent, TooltipComponent } from 'echarts/components'

use([CanvasRenderer, LineChart, ScatterChart, GridComponent, LegendComponent, MarkLineComponent, TooltipComponent])

/** Hours with two decimals and minutes as whole numbers, as the tables show them. */
export const fmtHours = (h: number) => h.toFixed(2)
export const fmtPct = (p: number | null) => (p === null ? '—' : `${p > 0 ? '+' : ''}${p.toFixed(1)} %`)
export const fmtMoney = (n: number) => n.toLocaleString('en-GB', { minimumFractionDigits: 2, maximumFractionDigits: 2 })
