// Bank holidays of England and Wales by their standing rules, for filling a workshop's closures. One-off days proclaimed for a
// single year (a royal occasion, a moved May holiday) are not rules and are not included: add those by hand.

export interface BankHoliday {
  /** YYYY-MM-DD */
  date: string
  name: string
}

const pad = (n: number) => String(n).padStart(2, '0')
const ymd = (d: Date) => `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}`
const utc = (y: number, m: number, d: number) => new Date(Date.UTC(y, m - 1, d))
const plusDays = (d: Date, n: number) => new Date(d.getTime() + n * 86_400_000)

/** Easter Sunday of the Gregorian calendar (the anonymous Gregorian algorithm, as given by Meeus). */
export function easterSunday(year: number): string {
  const a = year % 19
  const b = Math.floor(year / 100)
  const c = year % 100
  const d = Math.floor(b / 4)
  const e = b % 4
  const f = Math.floor((b + 8) / 25)
  const g = Math.floor((b - f + 1) / 3)
  const h = (19 * a + b - d - g + 15) % 30
  const i = Math.floor(c / 4)
  const k = c % 4
  const l = (32 + 2 * e + 2 * i - h - k) % 7
  const m = Math.floor((a + 11 * h + 22 * l) / 451)
  const month = Math.floor((h + l - 7 * m + 114) / 31)
  const day = ((h + l - 7 * m + 114) % 31) + 1
  return ymd(utc(year, month, day))
}

/** The first Monday of a month, or with `last` the last one. */
function monday(year: number, month: number, last = false): Date {
  let d = last ? plusDays(utc(year, month + 1, 1), -1) : utc(year, month, 1)
  while (d.getUTCDay() !== 1) d = plusDays(d, last ? -1 : 1)
  return d
}

/**
 * England and Wales: New Year's Day, Good Friday, Easter Monday, the first and last Mondays of May, the last Monday of August,
 * Christmas Day and Boxing Day; a holiday on a Saturday or Sunday moves to the next weekday not already a holiday.
 */
export function englandWalesBankHolidays(year: number): BankHoliday[] {
  const out: BankHoliday[] = []
  const taken = new Set<string>()
  const fixed = (d: Date, name: string) => {
    let day = d
    let moved = false
    while (day.getUTCDay() === 0 || day.getUTCDay() === 6 || taken.has(ymd(day))) {
      day = plusDays(day, 1)
      moved = true
    }
    taken.add(ymd(day))
    out.push({ date: ymd(day), name: moved ? `${name} (substitute day)` : name })
  }
  fixed(utc(year, 1, 1), "New Year's Day")
  const easter = new Date(`${easterSunday(year)}T00:00:00Z`)
  out.push({ date: ymd(plusDays(easter, -2)), name: 'Good Friday' }, { date: ymd(plusDays(easter, 1)), name: 'Easter Monday' })
  out.push({ date: ymd(monday(year, 5)), name: 'Early May bank holiday' })
  out.push({ date: ymd(monday(year, 5, true)), name: 'Spring bank holiday' })
  out.push({ date: ymd(monday(year, 8, true)), name: 'Summer bank holiday' })
  fixed(utc(year, 12, 25), 'Christmas Day')
  fixed(utc(year, 12, 26), 'Boxing Day')
  return out.sort((x, y) => x.date.localeCompare(y.date))
}

/** The bank holidays from `from` to `to` (YYYY-MM-DD, both included). */
export function englandWalesBankHolidaysBetween(from: string, to: string): BankHoliday[] {
  const out: BankHoliday[] = []
  for (let y = Number(from.slice(0, 4)); y <= Number(to.slice(0, 4)); y++)
    out.push(...englandWalesBankHolidays(y).filter((h) => h.date >= from && h.date <= to))
  return out
}
