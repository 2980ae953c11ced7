// England and Wales bank holidays from their standing rules, checked against dates published elsewhere.
import { describe, expect, it } from 'vitest'
import { easterSunday, englandWalesBankHolidays, englandWalesBankHolidaysBetween } from '../../shared/domain/bank-holidays'

describe('easterSunday', () => {
  it('when asked for years of published Easter tables, then it gives their dates', () => {
    // Gregorian Easter Sundays as tabulated in almanacs (values from memory of those tables; 2285 is the earliest possible
    // date, 22 March, and 2038 among the latest, 25 April).
    const table: [number, string][] = [
      [2000, '2000-04-23'],
      [2019, '2019-04-21'],
      [2024, '2024-03-31'],
      [2025, '2025-04-20'],
      [2026, '2026-04-05'],
      [2027, '2027-03-28'],
      [2038, '2038-04-25'],
      [2285, '2285-03-22'],
    ]
    for (const [year, date] of table) expect(easterSunday(year), String(year)).toBe(date)
  })
})

describe('englandWalesBankHolidays', () => {
  it('when asked for 2026 and 2027, then it gives the published England and Wales list, substitute days included', () => {
    // The UK government's published list of England and Wales bank holidays (gov.uk/bank-holidays; dates from memory of it).
    // 2026: Boxing Day is a Saturday → Monday 28 December. 2027: Christmas Saturday → Monday 27, Boxing Sunday → Tuesday 28.
    expect(englandWalesBankHolidays(2026).map((h) => h.date)).toEqual([
      '2026-01-01',
      '2026-04-03',
      '2026-04-06',
      '2026-05-04',
      '2026-05-25',
      '2026-08-31',
      '2026-12-25',
      '2026-12-28',
    ])
    expect(englandWalesBankHolidays(2027).map((h) => h.date)).toEqual([
      '2027-01-01',
      '2027-03-26',
      '2027-03-29',
      '2027-05-03',
      '2027-05-31',
      '2027-08-30',
      '2027-12-27',
      '2027-12-28',
    ])
    expect(englandWalesBankHolidays(2026).find((h) => h.date === '2026-12-28')?.name).toBe('Boxing Day (substitute day)')
  })

  it("when New Year's Day is a Saturday (2022), then the holiday is Monday 3 January", () => {
    // Published list for 2022 (from memory): 3 January substitute day. (2022 also had one-off June days, not rules.)
    expect(englandWalesBankHolidays(2022)[0]).toEqual({ date: '2022-01-03', name: "New Year's Day (substitute day)" })
  })

  it('when asked for a stretch across the new year, then it gives only the days inside it', () => {
    expect(englandWalesBankHolidaysBetween('2026-12-04', '2027-01-31').map((h) => h.date)).toEqual(['2026-12-25', '2026-12-28', '2027-01-01'])
  })
})
