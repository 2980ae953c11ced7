// A step's planned start as the order drawer shows it: outside work that waits for the workshop to open never reads 00:00.
import { describe, expect, it } from 'vitest'
import { formatPlannedStart as plannedStart } from '@/composables/use-workshop-time'

describe('planned start', () => {
  it('when outside work is planned from the first minute of Mon 7 Dec 2026 in Berlin, then it reads the day at opening, not 00:00', () => {
    // By hand: 2026-12-06T23:00Z is 00:00 on Monday 7 December in Berlin (CET, UTC+1 in winter); 7 Dec 2026 is a Monday
    // (1 Jan 2027 is a Friday: 25 days earlier, 3 weeks and 4 days, is a Monday).
    expect(plannedStart('2026-12-06T23:00:00.000Z', 'Europe/Berlin', true)).toBe('Mon 7 Dec 2026, at opening')
  })

  it('when outside work goes out at 14:35, once the step before it is done, then it reads that time', () => {
    // 13:35Z is 14:35 in Berlin.
    expect(plannedStart('2026-12-07T13:35:00.000Z', 'Europe/Berlin', true)).toBe('Mon 7 Dec 2026, 14:35')
  })

  it('when bench work is planned at 00:00 or nothing is planned, then it reads as the clock says, or a dash', () => {
    expect(plannedStart('2026-12-07T00:00:00.000Z', 'Europe/London', false)).toBe('Mon 7 Dec 2026, 00:00')
    expect(plannedStart(null, 'Europe/London', true)).toBe('—')
  })
})
