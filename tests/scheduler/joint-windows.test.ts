// The working time a bench and a person share, as the board, the live plan's checks, moves by hand and the promise check look it up.
import { describe, it, expect } from 'vitest'
import { jointWindows } from '../../server/scheduler/calendar.ts'

// Hand-made calendars (minutes): the bench is open 08:00–12:00 and 13:00–17:00; the person works 10:00–15:00 (a part-timer
// with lunch at the bench's hour); a second bench is out of use all day.
const problem = {
  benches: [
    {
      id: 'b1',
      available: [
        { start: 480, end: 720 },
        { start: 780, end: 1020 },
      ],
    },
    { id: 'b2', available: [] },
  ],
  people: [{ id: 'p1', available: [{ start: 600, end: 900 }] }],
}

describe('joint working time of a bench and a person', () => {
  it('when both are known, then it is the minutes both work: 10:00–12:00 and 13:00–15:00', () => {
    expect(jointWindows(problem).both('b1', 'p1')).toEqual([
      { start: 600, end: 720 },
      { start: 780, end: 900 },
    ])
  })

  it('when the bench works no time, then they share none', () => {
    expect(jointWindows(problem).both('b2', 'p1')).toEqual([])
  })

  it('when either is missing or unknown, then there is no joint time, and each alone is its own calendar', () => {
    const j = jointWindows(problem)
    expect(j.both(null, 'p1')).toBeUndefined()
    expect(j.both('b1', undefined)).toBeUndefined()
    expect(j.both('b9', 'p1')).toBeUndefined()
    expect(j.bench('b1')).toEqual(problem.benches[0]!.available)
    expect(j.person('p1')).toEqual([{ start: 600, end: 900 }])
    expect(j.bench('b9')).toBeUndefined()
    expect(j.person(null)).toBeUndefined()
  })

  it('when looked up again for the same problem, then the same answer is given without working it out again', () => {
    const first = jointWindows(problem).both('b1', 'p1')
    expect(jointWindows(problem).both('b1', 'p1')).toBe(first)
    // Another problem (even with equal calendars) has its own.
    expect(jointWindows({ ...problem }).both('b1', 'p1')).not.toBe(first)
  })
})
