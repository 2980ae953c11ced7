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

/**
 * Working minutes as "2 working days 3 h", "5 h 20 min", "40 min" (a working day = dayMinutes), rounded to the nearest unit
 * shown: whole minutes under a working day; from a working day on, whole hours, or the next whole working day when that is
 * nearer (2 days 7 h 45 min with an 8-h day reads "3 working days"). Anything but zero reads at least "under 1 min".
 */
export function formatWorkingTime(minutes: number, dayMinutes: number): string {
  const exact = Math.abs(minutes)
  if (exact === 0) return '0 min'
  const m = Math.round(exact)
  if (m === 0) return 'under 1 min'
  if (dayMinutes <= 0 || m < dayMinutes) {
    const h = Math.floor(m / 60),
      min = m % 60
    return [h > 0 ? `${h} h` : '', min > 0 ? `${min} min` : ''].filter(Boolean).join(' ')
  }
  let days = Math.floor(m / dayMinutes)
  const rest = m - days * dayMinutes
  let h = Math.round(rest / 60)
  // The next whole day when it is at least as near as the nearest whole hour (never "8 h" in a day of 7 h 45 min).
  if (dayMinutes - rest <= Math.abs(rest - h * 60)) {
    days++
    h = 0
  }
  return `${days} working day${days === 1 ? '' : 's'}${h > 0 ? ` ${h} h` : ''}`
}
