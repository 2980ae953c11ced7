// Lateness in the workshop's own terms: working minutes between two moments, and "2 working days 3 h" for people.

export interface Span {
  start: number
  end: number
}

/** Working minutes in [a, b) given the workshop's open hours (sorted, disjoint); negative when b is before a. */
export function workingMinutesBetween(open: Span[], a: number, b: number): number {
  if (b < a) return -workingMinutesBetween(open, b, a)
  let t = 0
  for (const w of open) {
    if (w.end <= a) continue
    if (w.start >= b) break
    t += Math.min(b, w.end) - Math.max(a, w.start)
  }
  return t
}

/** Open minutes of a typical working day: the most common length among the open days. */
export function typicalDayMinutes(open: Span[]): number {
  const perDay = new Map<number, number>()
  for (const w of open) {
    const d = Math.floor(w.start / 1440)
    perDay.set(d, (perDay.get(d) ?? 0) + (w.end - w.start))
  }
  const counts = new Map<number, number>()
  for (const m of perDay.values()) counts.set(m, (counts.get(m) ?? 0) + 1)
  let best = 480,
    n = 0
  for (const [m, c] of counts)
    if (c > n) {
      best = m
      n = c
    }
  return best
}

/** Working minutes as "2 working days 3 h", "5 h 20 min", "40 min" (a working day = dayMinutes). */
export function formatWorkingTime(minutes: number, dayMinutes: number): string {
  const m = Math.round(Math.abs(minutes))
  const days = dayMinutes > 0 ? Math.floor(m / dayMinutes) : 0
  const rest = m - days * dayMinutes
  const h = Math.floor(rest / 60),
    min = rest % 60
  const parts: string[] = []
  if (days > 0) parts.push(`${days} working day${days === 1 ? '' : 's'}`)
  if (h > 0) parts.push(`${h} h`)
  if (min > 0 && days === 0) parts.push(`${min} min`)
  return parts.length ? parts.join(' ') : '0 min'
}
