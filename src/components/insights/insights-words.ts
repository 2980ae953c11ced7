// Bias and MAPE said in plain words beside the figures, so the owner need not know the statistics to read them.
import type { ComparisonRow } from '@shared/schemas/insights'
import { OUTSIDE_RATIO_WORDS } from '@shared/domain/estimate'

/** The operations a table or chart leaves out, how many and why. */
export function leftOutInWords(n: number, of: string): string {
  return `${n} ${n === 1 ? 'operation' : 'operations'} left out of ${of}: ${OUTSIDE_RATIO_WORDS} (a step started and finished within seconds, or left running)`
}

/** What the bias figure means: taken together, how much longer (or less) the work took than its estimates. */
export function biasInWords(r: Pick<ComparisonRow, 'biasPct' | 'direction'>): string {
  if (r.biasPct === null) return 'there is no estimated time to compare with'
  const pct = `${Math.abs(r.biasPct).toFixed(1)} %`
  if (r.direction === 'even' || Math.abs(r.biasPct) < 0.05) return 'taken together, the work took as long as estimated'
  return r.direction === 'over' ? `taken together, the work took ${pct} longer than estimated` : `taken together, the work took ${pct} less time than estimated`
}

/** What the MAPE figure means: how far a single estimate typically misses, whichever way, against the time actually taken. */
export function mapeInWords(r: Pick<ComparisonRow, 'mapePct'>): string {
  if (r.mapePct === null) return 'no actual time to compare with'
  return `on average, an operation's estimate was ${r.mapePct.toFixed(1)} % off the time it actually took, too high or too low`
}

export const BIAS_HELP =
  'Bias: the hours actually taken minus the hours estimated, as a share of the estimate, over all the operations in the row. Plus means the work took longer than estimated, minus that it took less time.'
export const MAPE_HELP =
  'MAPE (mean absolute percentage error): for each operation, how far the estimate was from the time actually taken, either way, as a share of that time; then the average over the operations. Over- and underestimates do not cancel out here.'
