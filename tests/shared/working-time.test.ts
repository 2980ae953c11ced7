// Working time between two moments and its wording (hand-worked on a Mon–Fri 08:30–17:00 week).
import { describe, it, expect } from 'vitest'
import { formatWorkingTime, typicalDayMinutes, workingMinutesBetween } from '../../shared/domain/working-time'

const day = (d: number) => ({ start: d * 1440 + 510, end: d * 1440 + 1020 }) // 08:30–17:00, 510 min
const week = [0, 1, 2, 3, 4, 7, 8].map(day)

describe('working time', () => {
  it('when a piece due Friday 17:00 is done Monday 10:00, then it is 90 working minutes late, not 65 clock hours', () => {
    expect(workingMinutesBetween(week, 4 * 1440 + 1020, 7 * 1440 + 600)).toBe(90)
  })
  it('when done before the due moment, then the working minutes are negative', () => {
    expect(workingMinutesBetween(week, 1 * 1440 + 600, 0 * 1440 + 600)).toBe(-510)
  })
  it('when the open days are 8.5 h, then a typical day is 510 min and 1,200 working minutes read "2 working days 3 h"', () => {
    expect(typicalDayMinutes(week)).toBe(510)
    // 1200 = 2 × 510 + 180 (hand-worked).
    expect(formatWorkingTime(1200, 510)).toBe('2 working days 3 h')
    expect(formatWorkingTime(95, 510)).toBe('1 h 35 min')
  })
})
