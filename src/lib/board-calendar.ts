// The board's calendar: view settings, workshop-zone days, the loaded data window and stepping it (pure; used by the board store and its components).
import dayjs from 'dayjs'
import isoWeek from 'dayjs/plugin/isoWeek'
import timezone from 'dayjs/plugin/timezone'
import utc from 'dayjs/plugin/utc'

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

/**
 * The day the board opens on: today, or, while the workshop is shut (a night, a weekend, a closure), the day it next opens —
 * on a Saturday the coming week is the one to plan. `nonWorking` is the board's list of the workshop's shut stretches; a
 * stretch running past `until` (the end of what was loaded) says nothing about when work resumes, so today stays.
 */
export function openingDay(now: Date, tz: string, nonWorking: readonly { start: string; end: string }[], until?: Date): string {
  const t = now.getTime()
  const shut = nonWorking.find((x) => Date.parse(x.start) <= t && t < Date.parse(x.end))
  if (!shut || (until && Date.parse(shut.end) >= until.getTime())) return localDay(now, tz)
  return localDay(shut.end, tz)
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
 * The toolbar's name for a zoom's range: "Friday 4 December 2026", "W49 · 30 Nov – 4 Dec 2026", "W49–W52 · 30 Nov – 27 Dec
 * 2026". A week runs to its last day shown: `weekDays` days from Monday (5, Friday, when the weekend is folded away; 7 with the
 * whole clock).
 */
export function zoomRangeLabel(zoom: Zoom, anchorDay: string, weekDays = 5): string {
  const a = dayjs(anchorDay)
  if (zoom === 'day') return a.format('dddd D MMMM YYYY')
  const mon = dayjs(dataWindowFor(anchorDay).from)
  if (zoom === 'week') return `${weekNo(mon)} · ${mon.format('D MMM')} – ${mon.add(weekDays - 1, 'day').format('D MMM YYYY')}`
  return `${weekNo(mon)}–${weekNo(mon.add(21, 'day'))} · ${mon.format('D MMM')} – ${mon.add(27, 'day').format('D MMM YYYY')}`
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
