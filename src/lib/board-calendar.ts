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

/** The data window loaded around an anchor day: four ISO weeks from the anchor's Monday. */
export function dataWindowFor(anchorDay: string): { from: string; to: string } {
  const from = weekMonday(anchorDay)
  return { from, to: dayjs(from).add(27, 'day').format('YYYY-MM-DD') }
}

/** What the board shows at each zoom: one working day, Monday to Friday, or four weeks. */
export function visibleWindow(zoom: Zoom, anchorDay: string, tz: string): { start: Date; end: Date } {
  if (zoom === 'day') return { start: dayjs.tz(`${anchorDay} 07:30`, tz).toDate(), end: dayjs.tz(`${anchorDay} 17:30`, tz).toDate() }
  const monday = weekMonday(anchorDay)
  if (zoom === 'week')
    return { start: dayjs.tz(`${monday} 06:00`, tz).toDate(), end: dayjs.tz(`${dayjs(monday).add(4, 'day').format('YYYY-MM-DD')} 19:00`, tz).toDate() }
  return { start: dayStart(monday, tz), end: dayStart(dayjs(monday).add(28, 'day').format('YYYY-MM-DD'), tz) }
}

/** The anchor one step back or forward at the zoom. */
export function shiftAnchor(anchorDay: string, zoom: Zoom, direction: -1 | 1): string {
  const step = zoom === 'day' ? 1 : zoom === 'week' ? 7 : 28
  let d = dayjs(anchorDay).add(direction * step, 'day')
  // Day by day, skip the weekend.
  if (zoom === 'day') while (d.isoWeekday() > 5) d = d.add(direction, 'day')
  return d.format('YYYY-MM-DD')
}
