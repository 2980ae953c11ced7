// The board toolbar's range label: the zoom's range, or the days the timeline really shows once it left it.
import { describe, expect, it } from 'vitest'
import { openingDay, shownRangeLabel, zoomRangeLabel } from '@/lib/board-calendar'

const TZ = 'Europe/London'
// December in London is GMT (UTC+0), so these instants are the workshop's local times.
const at = (iso: string) => new Date(`${iso}Z`)

describe('board range label', () => {
  it('when the zoom is a week, then it names the ISO week and Monday to Friday', () => {
    // Friday 4 Dec 2026 is in ISO week 49, which starts on Monday 30 Nov.
    expect(zoomRangeLabel('week', '2026-12-04')).toBe('W49 · 30 Nov – 4 Dec 2026')
    expect(zoomRangeLabel('day', '2026-12-04')).toBe('Friday 4 December 2026')
    expect(zoomRangeLabel('month', '2026-12-04')).toBe('W49–W52 · 30 Nov – 27 Dec 2026')
  })

  it('when a job at risk is focused from Thursday 3 to Friday 18 December, then the label names those days and weeks', () => {
    // Thu 3 Dec is in W49 (30 Nov – 6 Dec), Fri 18 Dec in W51 (14 – 20 Dec).
    expect(shownRangeLabel(at('2026-12-03T08:00:00'), at('2026-12-18T17:00:00'), TZ)).toBe('W49–W51 · Thu 3 – Fri 18 Dec 2026')
  })

  it('when the range ends at midnight, then the day before is its last day', () => {
    expect(shownRangeLabel(at('2026-11-30T00:00:00'), at('2026-12-07T00:00:00'), TZ)).toBe('W49 · Mon 30 Nov – Sun 6 Dec 2026')
  })

  it('when the range crosses a year, then both ends carry their year and week', () => {
    // 2026 starts on a Thursday, so it has 53 ISO weeks; Mon 4 Jan 2027 begins W01, which holds Fri 8 Jan.
    expect(shownRangeLabel(at('2026-12-28T07:30:00'), at('2027-01-08T17:30:00'), TZ)).toBe('W53–W01 · Mon 28 Dec 2026 – Fri 8 Jan 2027')
  })

  it('when the range stays inside one day, then the label is that day', () => {
    expect(shownRangeLabel(at('2026-12-03T09:00:00'), at('2026-12-03T12:00:00'), TZ)).toBe('W49 · Thursday 3 December 2026')
  })
})

describe('the day the board opens on (pure rule)', () => {
  // Hand-worked from a Monday–Friday week of 08:30–12:30 and 13:15–17:00 (common practice, no source); London is GMT in December.
  const shut = [
    { start: '2026-12-03T17:00:00.000Z', end: '2026-12-04T08:30:00.000Z' },
    { start: '2026-12-04T17:00:00.000Z', end: '2026-12-07T08:30:00.000Z' },
    { start: '2026-12-22T17:00:00.000Z', end: '2027-01-04T08:30:00.000Z' },
  ]
  it('when the workshop is open, then today', () => {
    expect(openingDay(at('2026-12-04T10:00:00'), TZ, shut)).toBe('2026-12-04')
  })
  it('when it is Thursday night after midnight, then Friday (the same day, the stretch ends that morning)', () => {
    expect(openingDay(at('2026-12-04T02:00:00'), TZ, shut)).toBe('2026-12-04')
  })
  it('when it is Friday evening or the weekend, then the Monday after', () => {
    expect(openingDay(at('2026-12-04T17:00:00'), TZ, shut)).toBe('2026-12-07')
    expect(openingDay(at('2026-12-06T23:59:00'), TZ, shut)).toBe('2026-12-07')
  })
  it('when the shut stretch runs past what was loaded, then today stays (when it opens again is not known)', () => {
    expect(openingDay(at('2026-12-24T09:00:00'), TZ, shut, at('2026-12-27T00:00:00'))).toBe('2026-12-24')
    expect(openingDay(at('2026-12-24T09:00:00'), TZ, shut, at('2027-01-10T00:00:00'))).toBe('2027-01-04')
  })
})
