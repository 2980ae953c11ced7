// The board's calendar: view settings, workshop-zone days, work while the workshop is shut, the loaded data window and stepping it
// (pure; used by the board store and its components).
import dayjs from 'dayjs'
import isoWeek from 'dayjs/plugin/isoWeek'
import timezone from 'dayjs/plugin/timezone'
import utc from 'dayjs/plugin/utc'
import type { BoardData, BoardItem } from '@shared/schemas/board'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

export type RowsBy = 'bench' | 'person'
export type ColourBy = 'kind' | 'state' | 'order'
export type Zoom = 'day' | 'week' | 'month'

/** Midnight of a local calendar day in the workshop's zone. */
export function dayStart(day: string, tz: string): Date {
  return dayjs.tz(`${day} 00:00`, tz).toDate()
}

/** The local calendar day of an instant in the workshop's zone. */
export function localDay(at: Date | string | number, tz: string): string {
  return dayjs(at).tz(tz).format('YYYY-MM-DD')
}

/** Monday of the ISO week that holds the day. */
export function weekMonday(day: string): string {
  return dayjs(day).startOf('isoWeek').format('YYYY-MM-DD')
}

/** Timestamps from the API: ISO 8601, or PostgreSQL's "2026-12-11 08:30:00+00". */
export function parseInstant(s: string): Date {
  let t = s.trim().replace(' ', 'T')
  if (/[+-]\d{2}$/.test(t)) t += ':00'
  return new Date(t)
}

/** A stretch of time in milliseconds. */
export type Span = { start: number; end: number }

/** The stretches a bar really takes its row: its worked pieces when it pauses, else start to end (milliseconds). */
export function workedSpans(item: Pick<BoardItem, 'start' | 'end' | 'segments'>): Span[] {
  const s = parseInstant(item.start).getTime(),
    e = parseInstant(item.end).getTime()
  if (!item.segments || item.segments.length < 2) return [{ start: s, end: e }]
  return item.segments.map((p) => ({ start: Math.max(s, parseInstant(p.start).getTime()), end: Math.min(e, parseInstant(p.end).getTime()) }))
}

/**
 * Work in time the workshop is shut, by the day it begins on: the board's `shutWork` (someone's own hours, time recorded at a
 * bench, running work up to now) and planned bench work that starts while the workshop is shut (a step planned on a Saturday
 * the workshop has since stopped opening), each to the end of the day it starts on.
 */
export function workWhileShut(data: Pick<BoardData, 'nonWorking'> & Partial<Pick<BoardData, 'shutWork' | 'items'>>, tz: string): Span[] {
  const shut = data.nonWorking.map((x) => ({ start: parseInstant(x.start).getTime(), end: parseInstant(x.end).getTime() }))
  const out: Span[] = (data.shutWork ?? []).map((x) => ({ start: parseInstant(x.start).getTime(), end: parseInstant(x.end).getTime() }))
  for (const i of data.items ?? []) {
    if (i.outside || i.actual) continue
    for (const p of workedSpans(i)) {
      if (!shut.some((x) => x.start <= p.start && p.start < x.end)) continue
      const dayEnd = dayStart(dayjs(p.start).tz(tz).add(1, 'day').format('YYYY-MM-DD'), tz).getTime()
      out.push({ start: p.start, end: Math.min(p.end, dayEnd) })
    }
  }
  return out.filter((p) => p.end > p.start)
}

/**
 * The day the board opens on: today, or, while the workshop is shut (a night, a weekend, a closure), the day it next opens —
 * on a Saturday nobody works the coming week is the one to plan. A day someone works while the workshop is shut (`worked`:
 * `workWhileShut`, their own hours, a time record, a step planned then) is shown on the board, so the board stays on it.
 * `worked` may be given as a function, called only when now is in a shut stretch. `nonWorking` is the board's list of the workshop's shut stretches; a stretch running past `until` (the end of what was
 * loaded) says nothing about when work resumes, so today stays.
 */
export function openingDay(
  now: Date,
  tz: string,
  nonWorking: readonly { start: string; end: string }[],
  o: { until?: Date; worked?: readonly Span[] | (() => readonly Span[]) } = {},
): string {
  const t = now.getTime()
  const today = localDay(now, tz)
  const shut = nonWorking.find((x) => parseInstant(x.start).getTime() <= t && t < parseInstant(x.end).getTime())
  if (!shut) return today
  const end = parseInstant(shut.end).getTime()
  if (o.until && end >= o.until.getTime()) return today
  const from = dayStart(today, tz).getTime(),
    to = dayStart(dayjs(today).add(1, 'day').format('YYYY-MM-DD'), tz).getTime()
  // Asked only while shut: working out the work in shut time walks every bar.
  const worked = typeof o.worked === 'function' ? o.worked() : (o.worked ?? [])
  if (worked.some((w) => w.start < to && w.end > from)) return today
  return localDay(end, tz)
}

/** The data window loaded around an anchor day: four ISO weeks from the anchor's Monday. */
export function dataWindowFor(anchorDay: string): { from: string; to: string } {
  const from = weekMonday(anchorDay)
  return { from, to: dayjs(from).add(27, 'day').format('YYYY-MM-DD') }
}

/**
 * What the board shows at each zoom: one working day, a whole ISO week (Monday 00:00 to the next Monday 00:00, so Saturday and
 * Sunday are there with the whole clock shown; with working hours only, the timeline steps its edges off the folded hours, so
 * a weekend nobody works in is not shown), or four weeks.
 */
export function visibleWindow(zoom: Zoom, anchorDay: string, tz: string): { start: Date; end: Date } {
  if (zoom === 'day') return { start: dayjs.tz(`${anchorDay} 07:30`, tz).toDate(), end: dayjs.tz(`${anchorDay} 17:30`, tz).toDate() }
  const monday = weekMonday(anchorDay)
  return {
    start: dayStart(monday, tz),
    end: dayStart(
      dayjs(monday)
        .add(zoom === 'week' ? 7 : 28, 'day')
        .format('YYYY-MM-DD'),
      tz,
    ),
  }
}

/** Monday to Friday: the days shown day by day when nothing more is known. */
export const isWeekday = (day: string) => dayjs(day).isoWeekday() <= 5

/**
 * The anchor one step back or forward at the zoom. Day by day, days not shown are stepped over: `shown` says which (the board
 * passes the days with unfolded time); by default the weekend.
 */
export function shiftAnchor(anchorDay: string, zoom: Zoom, direction: -1 | 1, shown: (day: string) => boolean = isWeekday): string {
  const step = zoom === 'day' ? 1 : zoom === 'week' ? 7 : 28
  let d = dayjs(anchorDay).add(direction * step, 'day')
  // At most a fortnight on, whatever `shown` says.
  if (zoom === 'day') for (let i = 0; i < 14 && !shown(d.format('YYYY-MM-DD')); i++) d = d.add(direction, 'day')
  return d.format('YYYY-MM-DD')
}

const weekNo = (d: dayjs.Dayjs) => `W${String(dayjs(d.format('YYYY-MM-DD')).isoWeek()).padStart(2, '0')}`

/**
 * The toolbar's name for a zoom's range: "Friday 4 December 2026", "W49 · 30 Nov – 4 Dec 2026", "W49–W52 · 30 Nov – 25 Dec
 * 2026". A week or four weeks run from their first day shown to their last: `shown` says which days the timeline shows (the
 * board passes the days with unfolded time: Monday to Friday when the weekends are folded away, a Saturday someone works too,
 * every day with the whole clock); by default Monday to Friday.
 */
export function zoomRangeLabel(zoom: Zoom, anchorDay: string, shown: (day: string) => boolean = isWeekday): string {
  const a = dayjs(anchorDay)
  if (zoom === 'day') return a.format('dddd D MMMM YYYY')
  const mon = dayjs(dataWindowFor(anchorDay).from)
  const days = zoom === 'week' ? 7 : 28
  const all = Array.from({ length: days }, (_, i) => mon.add(i, 'day'))
  const seen = all.filter((d) => shown(d.format('YYYY-MM-DD')))
  // Nothing shown at all (a range folded away whole): the range itself.
  const first = seen[0] ?? all[0]!,
    last = seen[seen.length - 1] ?? all[all.length - 1]!
  const weeks = zoom === 'week' ? weekNo(mon) : `${weekNo(mon)}–${weekNo(mon.add(21, 'day'))}`
  return `${weeks} · ${first.format('D MMM')} – ${last.format('D MMM YYYY')}`
}

/** The toolbar's name for what the timeline shows once it left the zoom's range (a job focused, a pan): "W49–W51 · Thu 3 – Fri 18 Dec 2026". */
export function shownRangeLabel(start: Date, end: Date, tz: string): string {
  const s = dayjs(start).tz(tz)
  // The end is exclusive: a range ending at midnight shows the day before.
  const e = dayjs(Math.max(start.getTime(), end.getTime() - 1)).tz(tz)
  if (s.format('YYYY-MM-DD') === e.format('YYYY-MM-DD')) return `${weekNo(s)} · ${s.format('dddd D MMMM YYYY')}`
  const weeks = weekNo(s) === weekNo(e) ? weekNo(s) : `${weekNo(s)}–${weekNo(e)}`
  const first = s.year() !== e.year() ? s.format('ddd D MMM YYYY') : s.month() !== e.month() ? s.format('ddd D MMM') : s.format('ddd D')
  return `${weeks} · ${first} – ${e.format('ddd D MMM YYYY')}`
}
