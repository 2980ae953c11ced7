// Dates and times shown in the workshop's own time zone, with ISO week numbers.
import dayjs from 'dayjs'
import isoWeek from 'dayjs/plugin/isoWeek'
import timezone from 'dayjs/plugin/timezone'
import utc from 'dayjs/plugin/utc'
import { computed } from 'vue'
import { useCalendarStore } from '@/stores/calendar'

dayjs.extend(utc)
dayjs.extend(timezone)
dayjs.extend(isoWeek)

export const WEEKDAYS = ['Mon', 'Tue', 'Wed', 'Thu', 'Fri', 'Sat', 'Sun'] as const
export const WEEKDAY_NAMES = ['Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday', 'Sunday'] as const

/** ISO 8601 week of a calendar date, e.g. "W23 2026" (week-based year). */
export function isoWeekLabel(date: string): string {
  const d = dayjs(date)
  return `W${String(d.isoWeek()).padStart(2, '0')} ${d.isoWeekYear()}`
}

/** A plain calendar date (YYYY-MM-DD, no zone): "Tue 9 Jun 2026". */
export function formatDay(date: string | null | undefined): string {
  return date ? dayjs(date).format('ddd D MMM YYYY') : '—'
}

/** A calendar month (YYYY-MM) as the app writes months: "2026-12" → "Dec 2026"; anything else is shown as it is. */
export function formatMonth(month: string): string {
  return /^\d{4}-(0[1-9]|1[0-2])$/.test(month) ? dayjs(`${month}-01`).format('MMM YYYY') : month
}

/**
 * When a step is planned to start, on the workshop's wall clock: "Mon 7 Dec 2026, 14:35". Outside work planned from a day's
 * first minute waited for the workshop to open (the planner counts the workshop's days whole for outside work), so it reads
 * "Mon 7 Dec 2026, at opening", never 00:00.
 */
export function formatPlannedStart(iso: string | null | undefined, tz: string, outside: boolean): string {
  if (!iso) return '—'
  const t = dayjs(iso).tz(tz)
  return outside && t.format('HH:mm') === '00:00' ? `${t.format('ddd D MMM YYYY')}, at opening` : t.format('ddd D MMM YYYY, HH:mm')
}

export function useWorkshopTime() {
  const calendar = useCalendarStore()
  const tz = computed(() => calendar.settings?.timeZone ?? 'Europe/London')

  /** An instant shown on the workshop's wall clock. */
  const formatDateTime = (iso: string | null | undefined) => (iso ? dayjs(iso).tz(tz.value).format('ddd D MMM YYYY, HH:mm') : '—')
  /** A wall-clock "YYYY-MM-DD HH:mm" in the workshop's zone → ISO instant with offset. */
  const wallClockToIso = (wall: string) => dayjs.tz(wall, tz.value).format()
  /** Today in the workshop (YYYY-MM-DD). */
  const today = () => dayjs().tz(tz.value).format('YYYY-MM-DD')
  /** Whole days from the workshop's today to a date (negative when past). */
  const daysFromToday = (date: string) => dayjs(date).diff(dayjs(today()), 'day')

  /** A step's planned start; outside work waiting for the workshop to open reads "…, at opening" (formatPlannedStart). */
  const plannedStart = (iso: string | null | undefined, outside: boolean) => formatPlannedStart(iso, tz.value, outside)

  return { tz, formatDateTime, plannedStart, formatDay, isoWeekLabel, wallClockToIso, today, daysFromToday }
}
