// The promise check's dates in words: which date is quoted by default, how far the estimates run short, and where the range band's labels go.
import type { PromiseCheckResult } from '@shared/schemas/promise'

/** The date quoted to the customer by default: P80 of the range when it is later than the plan's date, else the plan's date. */
export function suggestedDate(r: PromiseCheckResult): { date: string; from: string } {
  if (r.range && r.range.p80.date > r.fixedPlan.date) return { date: r.range.p80.date, from: 'safe to promise (P80), with how long work has really taken' }
  return { date: r.fixedPlan.date, from: 'fits into the current plan, on the estimates' }
}

/**
 * How much longer than estimated the new piece's work has really taken, as a fraction (0.16 = 16 % over): each step's
 * median actual ÷ estimate for its kind, weighted by the step's bench minutes (outside work by its working days when the
 * piece has no bench work). Null without a range or without any step of a kind the range measured.
 */
export function estimateOverrun(r: PromiseCheckResult): number | null {
  if (!r.range) return null
  const median = new Map(r.range.kinds.map((k) => [k.kind, k.p50]))
  const bench = r.operations.filter((o) => o.minutes > 0 && median.has(o.kind))
  const steps = bench.length
    ? bench.map((o) => ({ w: o.minutes, m: median.get(o.kind)! }))
    : r.operations.filter((o) => o.outsideDays > 0 && median.has(o.kind)).map((o) => ({ w: o.outsideDays, m: median.get(o.kind)! }))
  const total = steps.reduce((t, s) => t + s.w, 0)
  if (!total) return null
  return steps.reduce((t, s) => t + s.w * s.m, 0) / total - 1
}

/** One plain sentence when the plan's date (on the estimates) is earlier than the even chance (with how work has really taken); else null. */
export function estimateGapSentence(r: PromiseCheckResult, formatDay: (date: string) => string): string | null {
  if (!r.range || !(r.fixedPlan.date < r.range.p50.date)) return null
  const over = estimateOverrun(r)
  const plan = formatDay(r.fixedPlan.date)
  const even = formatDay(r.range.p50.date)
  if (over !== null && over >= 0.005)
    return `The estimates are usually short here: work of these kinds has really taken about ${Math.round(over * 100)} % longer than estimated, and a step that runs over can miss its gap in the plan and wait for the next, so the plan's date (${plan}) is earlier than an even chance (${even}).`
  return `The plan's ${plan} assumes every step takes exactly its estimate; walked through the plan with how long work has really taken, an even chance is ${even}.`
}

export interface BandMark {
  label: string
  /** Position on the track, 0–100 %. */
  x: number
}
export interface PlacedMark extends BandMark {
  /** 0 is the row just above the track; each further row is one label higher. */
  row: number
  /** The label's left edge in px from its tick: centred, or moved right/left so it stays on the track. */
  offsetPx: number
}

/** The label's width at 11 px semibold, a little generous: about 6.5 px a character plus 4 px. */
export const labelWidthPx = (label: string) => Math.ceil(label.length * 6.5 + 4)

/**
 * Rows for the band's labels so none overlaps another: marks in order along the track, each label centred on its tick
 * (kept inside the track at either end), put in the lowest row where it clears every label already there by `gapPx`.
 */
export function placeBandLabels(marks: BandMark[], trackPx: number, gapPx = 6): PlacedMark[] {
  const rows: { left: number; right: number }[][] = []
  return [...marks]
    .sort((a, b) => a.x - b.x)
    .map((m) => {
      const w = labelWidthPx(m.label)
      const tick = (m.x / 100) * trackPx
      const left = Math.min(Math.max(tick - w / 2, 0), Math.max(0, trackPx - w))
      const span = { left, right: left + w }
      let row = 0
      while (rows[row]?.some((o) => span.left < o.right + gapPx && o.left < span.right + gapPx)) row++
      ;(rows[row] ??= []).push(span)
      return { ...m, row, offsetPx: Math.round(left - tick) }
    })
}
