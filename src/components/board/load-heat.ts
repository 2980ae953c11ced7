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

const OVER_BG = '#e6ad7c'

/**
 * Our ramp, in the same bands as `loadLevel`: pale linen at rest, warming to brass up to the planning load;
 * one flat amber above the planning load while the hours still suffice; oxide red once more is planned than is available
 * (deeper up to 125 %), the only band with white ink.
 */
export function heatColour(ratio: number | null, threshold: number): { bg: string; ink: string } {
  if (ratio === null) return { bg: '#f1efeb', ink: '#a29d96' }
  if (ratio > 1) return { bg: mix('#b4513f', '#a8473a', (ratio - 1) / 0.25), ink: '#ffffff' }
  if (ratio > threshold) return { bg: OVER_BG, ink: '#3a1f17' }
  const t = threshold > 0 ? ratio / threshold : 1
  return { bg: t < 0.5 ? mix('#fbfaf7', '#efe3c4', t * 2) : mix('#efe3c4', '#d6b46e', (t - 0.5) * 2), ink: '#3f3a35' }
}
/** The colour key, one entry per band of `heatColour`, worded for the planning load `threshold`; `flag` marks the band with the corner flag. */
export function loadLegend(threshold: number): { label: string; bg: string; flag: boolean }[] {
  const pl = Math.round(threshold * 100)
  const steps = [
    { r: threshold * 0.25, label: 'light' },
    { r: threshold * 0.75, label: 'filling up' },
    { r: threshold, label: `at the planning load (${pl} %)` },
    ...(threshold < 1 ? [{ r: (threshold + 1) / 2, label: `above the planning load (${pl}–100 %)` }] : []),
    { r: 1.1, label: 'more than the hours available (over 100 %)', flag: true },
  ]
  return steps.map((s) => ({ label: s.label, bg: heatColour(s.r, threshold).bg, flag: !!s.flag }))
}

/** Hours and minutes, so the days of a week visibly add up to its total: 465 → "7:45", 480 → "8:00", 2325 → "38:45". */
export function hours(minutes: number): string {
  const m = Math.round(minutes)
  return `${Math.floor(m / 60)}:${String(m % 60).padStart(2, '0')}`
}

/** "6:30 / 7:30 h" — planned against available. */
export function cellLabel(c: Pick<LoadCell, 'plannedMinutes' | 'availableMinutes'>): string {
  return `${hours(c.plannedMinutes)} / ${hours(c.availableMinutes)} h`
}

/** One ISO week of a row summed up; with `fromDay`, only its days from then on (the rest of the current week). */
export function weekTotal(row: LoadRow, week: string, fromDay?: string): LoadTotal {
  const cells = row.cells.filter((c) => c.week === week && (!fromDay || c.day >= fromDay))
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

/**
 * The day a week's total starts from: `today` in the week that holds it and in weeks already over (days already past leave the
 * total, so a past week counts nothing), else undefined: the whole week.
 */
export function weekFrom(week: Pick<WeekLoad['weeks'][number], 'days'>, today: string): string | undefined {
  return today && week.days.length && week.days[0]! <= today ? today : undefined
}

/** A week already over: every one of its days is before `today`. */
export const weekPast = (week: Pick<WeekLoad['weeks'][number], 'days'>, today: string) => !!today && week.days.every((d) => d < today)

/** A day's figures as the table shows them: a day before `today` is past and counts nothing, as the week's total leaves it out. */
export function dayTotal(row: LoadRow, day: string, today: string): LoadTotal & { past: boolean } {
  if (today && day < today) return { plannedMinutes: 0, availableMinutes: 0, operationIds: [], past: true }
  const cell = row.cells.find((x) => x.day === day)
  return { plannedMinutes: cell?.plannedMinutes ?? 0, availableMinutes: cell?.availableMinutes ?? 0, operationIds: cell?.operationIds ?? [], past: false }
}

/** Rows whose fullest ISO week goes past the planning load, fullest first: where the plan is tight. The current week counts from `today`. */
export function bottlenecks(load: Pick<WeekLoad, 'rows' | 'weeks' | 'planningLoad'>, today = ''): Bottleneck[] {
  const out: Bottleneck[] = []
  for (const row of load.rows) {
    let best: Bottleneck | null = null
    for (const w of load.weeks) {
      const t = weekTotal(row, w.week, weekFrom(w, today))
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
