// Pure helpers of the week-load heat table: planned against available hours, our colour ramp, the overload mark, week totals.
import type { LoadCell, LoadRow, WeekLoad } from '@shared/schemas/plan'

export type LoadLevel = 'closed' | 'idle' | 'light' | 'steady' | 'near' | 'over' | 'beyond'

export interface LoadTotal {
  plannedMinutes: number
  availableMinutes: number
  operationIds: number[]
}

/** Planned share of the available time; null when nothing is available and nothing planned, Infinity when work sits on no time. */
export function loadRatio(planned: number, available: number): number | null {
  if (available <= 0) return planned > 0 ? Infinity : null
  return planned / available
}

/**
 * Where a cell stands against the workshop's planning load (the share of hours it means to fill):
 * above it the cell is overloaded, above 100 % it is beyond what the people and benches have.
 */
export function loadLevel(ratio: number | null, threshold: number): LoadLevel {
  if (ratio === null) return 'closed'
  if (ratio > 1) return 'beyond'
  if (ratio > threshold) return 'over'
  if (ratio === 0) return 'idle'
  if (ratio >= threshold * 0.8) return 'near'
  if (ratio >= threshold * 0.4) return 'steady'
  return 'light'
}

const mix = (a: string, b: string, t: number): string => {
  const p = (h: string) => [1, 3, 5].map((i) => parseInt(h.slice(i, i + 2), 16))
  const [x, y] = [p(a), p(b)]
  const k = Math.min(1, Math.max(0, t))
  return `#${x
    .map((v, i) =>
      Math.round(v + (y[i]! - v) * k)
        .toString(16)
        .padStart(2, '0'),
    )
    .join('')}`
}

/** Our ramp: pale linen at rest, warming to brass as the plan fills up to the planning load, then oxide red beyond it. */
export function heatColour(ratio: number | null, threshold: number): { bg: string; ink: string } {
  if (ratio === null) return { bg: '#f1efeb', ink: '#a29d96' }
  if (ratio <= threshold) {
    const t = threshold > 0 ? ratio / threshold : 1
    return { bg: t < 0.5 ? mix('#fbfaf7', '#efe3c4', t * 2) : mix('#efe3c4', '#d6b46e', (t - 0.5) * 2), ink: '#3f3a35' }
  }
  // Overload: the further past the threshold, the deeper the red (full depth at 125 %).
  const t = Math.min(1, (ratio - threshold) / Math.max(0.05, 1.25 - threshold))
  const bg = mix('#dc9a72', '#a8473a', t)
  return { bg, ink: t > 0.35 ? '#ffffff' : '#3a1f17' }
}

/** Hours with one decimal, trailing ".0" dropped: 390 → "6.5", 480 → "8". */
export function hours(minutes: number): string {
  const h = Math.round((minutes / 60) * 10) / 10
  return Number.isInteger(h) ? String(h) : h.toFixed(1)
}

/** "6.5 / 7.5 h" — planned against available. */
export function cellLabel(c: Pick<LoadCell, 'plannedMinutes' | 'availableMinutes'>): string {
  return `${hours(c.plannedMinutes)} / ${hours(c.availableMinutes)} h`
}

/** One ISO week of a row summed up. */
export function weekTotal(row: LoadRow, week: string): LoadTotal {
  const cells = row.cells.filter((c) => c.week === week)
  return {
    plannedMinutes: cells.reduce((t, c) => t + c.plannedMinutes, 0),
    availableMinutes: cells.reduce((t, c) => t + c.availableMinutes, 0),
    operationIds: [...new Set(cells.flatMap((c) => c.operationIds))],
  }
}

export interface Bottleneck {
  row: LoadRow
  week: string
  ratio: number
}

/** Rows whose fullest ISO week goes past the planning load, fullest first: where the plan is tight. */
export function bottlenecks(load: Pick<WeekLoad, 'rows' | 'weeks' | 'planningLoad'>): Bottleneck[] {
  const out: Bottleneck[] = []
  for (const row of load.rows) {
    let best: Bottleneck | null = null
    for (const w of load.weeks) {
      const t = weekTotal(row, w.week)
      const r = loadRatio(t.plannedMinutes, t.availableMinutes)
      if (r === null || r <= load.planningLoad) continue
      if (!best || r > best.ratio) best = { row, week: w.week, ratio: r }
    }
    if (best) out.push(best)
  }
  return out.sort((a, b) => b.ratio - a.ratio)
}

/** "2026-W49" → "W49". */
export const weekShort = (week: string) => week.replace(/^\d{4}-/, '')

/** Percentage for a ratio, e.g. 0.873 → "87 %"; no time → "—". */
export function percent(ratio: number | null): string {
  if (ratio === null) return '—'
  if (!Number.isFinite(ratio)) return 'no time'
  return `${Math.round(ratio * 100)} %`
}
