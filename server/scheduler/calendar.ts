// Calendar arithmetic on sorted disjoint minute intervals: intersections, walking working time, working days, readable times.
import type { Interval } from './model.ts'

/** Intersection of two sorted, disjoint interval lists. */
export function intersect(a: Interval[], b: Interval[]): Interval[] {
  const out: Interval[] = []
  let i = 0,
    j = 0
  while (i < a.length && j < b.length) {
    const x = a[i]!,
      y = b[j]!
    const s = Math.max(x.start, y.start),
      e = Math.min(x.end, y.end)
    if (s < e) out.push({ start: s, end: e })
    if (x.end < y.end) i++
    else j++
  }
  return out
}

/** A bench's and a person's working time looked up by id (`Problem.benches` / `Problem.people`), and the time they share. */
export interface JointWindows {
  /** Both known: the minutes both work (their windows intersected, worked out once per pair); otherwise undefined. */
  both(benchId: string | null | undefined, personId: string | null | undefined): Interval[] | undefined
  bench(id: string | null | undefined): Interval[] | undefined
  person(id: string | null | undefined): Interval[] | undefined
}

type WithCalendars = { benches: readonly { id: string; available: Interval[] }[]; people: readonly { id: string; available: Interval[] }[] }
const jointCache = new WeakMap<WithCalendars, JointWindows>()

/** The joint working time of a problem's benches and people, one lookup per problem (kept while the problem is). */
export function jointWindows(problem: WithCalendars): JointWindows {
  let j = jointCache.get(problem)
  if (j) return j
  const benches = new Map(problem.benches.map((b) => [b.id, b.available]))
  const people = new Map(problem.people.map((p) => [p.id, p.available]))
  const pairs = new Map<string, Interval[]>()
  j = {
    bench: (id) => (id ? benches.get(id) : undefined),
    person: (id) => (id ? people.get(id) : undefined),
    both(benchId, personId) {
      const b = benchId ? benches.get(benchId) : undefined,
        p = personId ? people.get(personId) : undefined
      if (!b || !p) return undefined
      const key = `${benchId}\u0000${personId}`
      let w = pairs.get(key)
      if (!w) pairs.set(key, (w = intersect(b, p)))
      return w
    },
  }
  jointCache.set(problem, j)
  return j
}

/** Index of the first interval whose end is after t (or list length). */
export function firstEndingAfter(list: Interval[], t: number): number {
  let lo = 0,
    hi = list.length
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (list[mid]!.end > t) hi = mid
    else lo = mid + 1
  }
  return lo
}

/**
 * Walks `minutes` of working time through `windows` from t onwards.
 * Returns the worked segments, or null when the windows run out first.
 */
export function walkWorkingTime(windows: Interval[], t: number, minutes: number): Interval[] | null {
  const segs: Interval[] = []
  let left = minutes
  let i = firstEndingAfter(windows, t)
  if (left <= 0) {
    const w = windows[i]
    const s = w ? Math.max(t, w.start) : t
    return [{ start: s, end: s }]
  }
  while (left > 0) {
    const w = windows[i]
    if (!w) return null
    const s = Math.max(t, w.start)
    const e = Math.min(w.end, s + left)
    const last = segs[segs.length - 1]
    if (last && last.end === s)
      last.end = e // touching windows are one stretch of work
    else segs.push({ start: s, end: e })
    left -= e - s
    t = e
    i++
  }
  return segs
}

/** The part of [start, end) that falls inside the windows. */
export function clipToWindows(windows: Interval[], start: number, end: number): Interval[] {
  const out: Interval[] = []
  for (let i = firstEndingAfter(windows, start); i < windows.length; i++) {
    const w = windows[i]!
    if (w.start >= end) break
    const s = Math.max(start, w.start),
      e = Math.min(end, w.end)
    if (s < e) out.push({ start: s, end: e })
  }
  return out
}

/** True when [start, end) lies inside one window. */
export function insideWindows(windows: Interval[], start: number, end: number): boolean {
  const w = windows[firstEndingAfter(windows, start)]
  return w !== undefined && w.start <= start && end <= w.end
}

/**
 * Outside work (casting, hallmarking) sent at t: it takes the next `days` workshop days that open at or after t
 * and comes back at the close of the last one. Null when the calendar runs out.
 */
export function outsideWorkEnd(workshopDays: Interval[], t: number, days: number): number | null {
  if (days <= 0) return t
  let i = 0
  while (i < workshopDays.length && workshopDays[i]!.start < t) i++
  const last = workshopDays[i + days - 1]
  return last ? last.end : null
}

/**
 * When outside work ready at minute t leaves the workshop: at t when a workshop day is open then, else when the next one opens
 * (t when none is left). The days opening at or after that minute are those opening at or after t, so its return is unchanged.
 */
export function leaveTime(workshopDays: Interval[], t: number): number {
  for (const d of workshopDays) {
    if (d.end <= t) continue
    return d.start > t ? d.start : t
  }
  return t
}

const WEEKDAYS = ['Sun', 'Mon', 'Tue', 'Wed', 'Thu', 'Fri', 'Sat']

/** Weekday (0 = Sunday) of an ISO date string such as '2025-03-03'; Monday when it cannot be read. */
export function weekdayOf(isoDate: string): number {
  const m = /^(\d{4})-(\d{2})-(\d{2})/.exec(isoDate)
  if (!m) return 1
  return new Date(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]))).getUTCDay()
}

const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec']

/**
 * "Thu 3 Dec 14:00" for minute t when the origin is a readable ISO date (calendar arithmetic only, no clock), else
 * "Thu 14:00" counted from the origin's weekday with "+Nw" for later weeks. Minutes are wall-clock minutes of the origin's zone.
 */
export function formatMinute(t: number, originWeekday: number, originIso?: string): string {
  const m = originIso ? /^(\d{4})-(\d{2})-(\d{2})/.exec(originIso) : null
  if (m) {
    const day = Math.floor(t / 1440)
    const mins = t - day * 1440
    const d = new Date(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]) + day))
    return `${WEEKDAYS[d.getUTCDay()]} ${d.getUTCDate()} ${MONTHS[d.getUTCMonth()]} ${String(Math.floor(mins / 60)).padStart(2, '0')}:${String(mins % 60).padStart(2, '0')}`
  }
  return weekdayTime(t, originWeekday)
}

function weekdayTime(t: number, originWeekday: number): string {
  const day = Math.floor(t / 1440)
  const mins = t - day * 1440
  const hh = String(Math.floor(mins / 60)).padStart(2, '0')
  const mm = String(mins % 60).padStart(2, '0')
  const week = Math.floor((originWeekday + day - 1 + 7) / 7) - Math.floor((originWeekday - 1 + 7) / 7)
  const wd = WEEKDAYS[(((originWeekday + day) % 7) + 7) % 7]
  return `${wd} ${hh}:${mm}${week > 0 ? ` (+${week}w)` : ''}`
}
