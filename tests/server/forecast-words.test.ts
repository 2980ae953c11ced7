// An order's forecast words a planned job bag as the board does: working time late or to spare (open hours, rounded like the
// board), against its due day written as a day, not clock hours against an ISO date (hand-worked on the demo's 465-min day).
import { describe, expect, it } from 'vitest'
import { forecastWhy } from '../../server/services/order-forecast'

// The demo's working day: 08:30–12:30 and 13:15–17:00 = 240 + 225 = 465 min. 2026-12-11 is a Friday.
const o = {
  due: '2026-12-11',
  dayMinutes: 465,
  timeZone: 'Europe/London',
  now: new Date('2026-12-07T09:00:00Z'),
  when: () => 'Thu 17 Dec 10:00',
  livePlan: true,
}
const job = (state: 'late' | 'at-risk' | 'on-time', lateWorkingMinutes: number) => ({
  state,
  expectedCompletion: '2026-12-17T10:00:00Z',
  lateWorkingMinutes,
  // Clock minutes: 6.4 days; the words must not use them.
  latenessMinutes: 9216,
  reason: null,
})

describe('order forecast words', () => {
  it('when a piece finishes 4 working days 1 h after its due day, then it reads so, with the due day as "Fri 11 Dec"', () => {
    // 4 × 465 + 60 = 1,920 working minutes late.
    expect(forecastWhy(job('late', 1920), o)).toBe('Expected Thu 17 Dec 10:00, 4 working days 1 h late (due by the end of Fri 11 Dec).')
  })
  it('when a piece is tight with 381 working minutes left, then it reads "only 6 h 21 min to spare", not clock hours', () => {
    // 381 = 6 × 60 + 21.
    expect(forecastWhy(job('at-risk', -381), o)).toBe('Expected Thu 17 Dec 10:00, only 6 h 21 min to spare (due by the end of Fri 11 Dec).')
  })
  it('when a piece has days to spare, then they are working days, rounded to the hour', () => {
    // 2 × 465 + 415 (6 h 55 min) = 1,345 → 2 working days 7 h.
    expect(forecastWhy(job('on-time', -1345), o)).toBe('Expected Thu 17 Dec 10:00, 2 working days 7 h to spare (due by the end of Fri 11 Dec).')
  })
  it('when the due day is in another year than now, then the year is written', () => {
    // 2027-01-08 is a Friday.
    expect(forecastWhy(job('late', 60), { ...o, due: '2027-01-08' })).toBe('Expected Thu 17 Dec 10:00, 1 h late (due by the end of Fri 8 Jan 2027).')
  })
  it('when a piece has no bar, then it says to publish a plan only while none is live, and else that a planner run would place it', () => {
    const none = { state: 'unplanned' as const, expectedCompletion: null, lateWorkingMinutes: 0, reason: null }
    expect(forecastWhy(none, { ...o, livePlan: false })).toBe('Not on the live plan yet: publish a plan to get a date.')
    expect(forecastWhy(none, o)).toBe('Not in the live plan yet: run the planner to place it, then publish its plan to get a date.')
  })
})
