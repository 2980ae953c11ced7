// Workshop-local time: dayjs with time zones and ISO weeks, and the minute clock the engine plans in.
import dayjs, { type Dayjs } from 'dayjs'
import isoWeek from 'dayjs/plugin/isoWeek.js'
import timezone from 'dayjs/plugin/timezone.js'
import utc from 'dayjs/plugin/utc.js'
import type { WorkSpan } from '../../shared/schemas/common'
import { minutesOfDay } from '../../shared/schemas/common'
import type { When } from '../../shared/domain/rules'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)
export { dayjs, type Dayjs }

export interface Interval {
  start: number
  end: number
}

/** Minute clock: minute 0 is local midnight of `originDay` in the workshop's zone. */
export class MinuteClock {
  readonly originMs: number
  constructor(
    readonly timeZone: string,
    readonly originDay: string,
  ) {
    this.originMs = dayjs.tz(`${originDay} 00:00`, timeZone).valueOf()
  }
  toMinute(t: Date | string | number): number {
    return Math.round((new Date(t).getTime() - this.originMs) / 60_000)
  }
  toDate(minute: number): Date {
    return new Date(this.originMs + minute * 60_000)
  }
  /** Minute of a local date + time of day. */
  at(day: string, time = '00:00'): number {
    return Math.round((dayjs.tz(`${day} ${time}`, this.timeZone).valueOf() - this.originMs) / 60_000)
  }
  /** Local calendar days from the origin, `count` of them (YYYY-MM-DD). */
  days(count: number): string[] {
    const d0 = dayjs.tz(`${this.originDay} 12:00`, this.timeZone)
    return Array.from({ length: count }, (_, i) => d0.add(i, 'day').format('YYYY-MM-DD'))
  }
}

/** Working intervals of a weekly pattern over the given local days. */
export function expandPattern(clock: MinuteClock, pattern: WorkSpan[], days: string[]): Interval[] {
  const out: Interval[] = []
  for (const day of days) {
    const weekday = dayjs(day).isoWeekday()
    for (const s of pattern.filter((p) => p.weekday === weekday).sort((a, b) => minutesOfDay(a.start) - minutesOfDay(b.start))) {
      out.push({ start: clock.at(day, s.start), end: clock.at(day, s.end) })
    }
  }
  return out
}

/** Removes the `cut` intervals from sorted disjoint `list`. */
export function subtract(list: Interval[], cut: Interval[]): Interval[] {
  const cuts = [...cut].sort((a, b) => a.start - b.start)
  const out: Interval[] = []
  for (const w of list) {
    let s = w.start
    for (const c of cuts) {
      if (c.end <= s || c.start >= w.end) continue
      if (c.start > s) out.push({ start: s, end: c.start })
      s = Math.max(s, c.end)
      if (s >= w.end) break
    }
    if (s < w.end) out.push({ start: s, end: w.end })
  }
  return out
}

/** Whole local days [from, to] as minute intervals. */
export function dayRange(clock: MinuteClock, from: string, to: string): Interval {
  return { start: clock.at(from), end: clock.at(dayjs(to).add(1, 'day').format('YYYY-MM-DD')) }
}

/** A local calendar day (YYYY-MM-DD) as people read it: "Fri 11 Dec", with the year when it is not `now`'s in the zone ("Fri 1 Jan 1999"). */
export function formatDay(isoDate: string, timeZone: string, now: Date | number = Date.now()): string {
  const d = dayjs(isoDate.slice(0, 10))
  return d.format(d.year() === dayjs(now).tz(timeZone).year() ? 'ddd D MMM' : 'ddd D MMM YYYY')
}

/** A local calendar day (YYYY-MM-DD) with its year, for a text kept beyond this year (an audit reason): "Mon 21 Dec 2026". */
export const formatDayWithYear = (isoDate: string): string => dayjs(isoDate.slice(0, 10)).format('ddd D MMM YYYY')

/** An instant on the workshop's clock as people read it: "Mon 7 Dec 10:38", with the year when it is not `now`'s ("Fri 1 Jan 1999 10:00"). */
export function formatInstant(at: Date | string | number, timeZone: string, now: Date | number = Date.now()): string {
  const d = dayjs(at).tz(timeZone)
  return d.format(d.year() === dayjs(now).tz(timeZone).year() ? 'ddd D MMM HH:mm' : 'ddd D MMM YYYY HH:mm')
}

/**
 * The rule book's writer of times (`When`) on the workshop's clock: each minute as `formatInstant` writes it, and its local
 * day and time of day, so a stretch within one day names the day once ("Mon 7 Dec 10:38–11:18").
 */
export function workshopWhen(
  timeZone: string,
  toDate: (minute: number) => Date,
  now: Date | number = Date.now(),
): When & { dayOf: (minute: number) => string; timeOf: (minute: number) => string } {
  const local = (m: number) => dayjs(toDate(m)).tz(timeZone)
  return Object.assign((m: number) => formatInstant(toDate(m), timeZone, now), {
    dayOf: (m: number) => local(m).format('YYYY-MM-DD'),
    timeOf: (m: number) => local(m).format('HH:mm'),
  })
}
