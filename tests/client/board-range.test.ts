// The board toolbar's range label: the zoom's range, or the days the timeline really shows once it left it.
import { describe, expect, it } from 'vitest'
import dayjs from 'dayjs'
import { openingDay, shownRangeLabel, workWhileShut, zoomRangeLabel } from '@/lib/board-calendar'
import type { BoardItem } from '@shared/schemas/board'

const TZ = 'Europe/London'
// December in London is GMT (UTC+0), so these instants are the workshop's local times.
const at = (iso: string) => new Date(`${iso}Z`)

describe('board range label', () => {
  it('when the zoom is a week or four weeks with the weekends folded, then it names the ISO weeks and Monday to Friday', () => {
    // Friday 4 Dec 2026 is in ISO week 49, which starts on Monday 30 Nov; four weeks from it end on Sunday 27 Dec, whose Friday is
    // the 25th.
    expect(zoomRangeLabel('week', '2026-12-04')).toBe('W49 · 30 Nov – 4 Dec 2026')
    expect(zoomRangeLabel('day', '2026-12-04')).toBe('Friday 4 December 2026')
    expect(zoomRangeLabel('month', '2026-12-04')).toBe('W49–W52 · 30 Nov – 25 Dec 2026')
  })
  it('when four weeks are shown with the whole clock, or their last Saturday is worked, then they run to that Sunday or Saturday', () => {
    expect(zoomRangeLabel('month', '2026-12-04', () => true)).toBe('W49–W52 · 30 Nov – 27 Dec 2026')
    expect(zoomRangeLabel('month', '2026-12-04', (d) => d === '2026-12-26' || !['Sat', 'Sun'].includes(dayjs(d).format('ddd')))).toBe(
      'W49–W52 · 30 Nov – 26 Dec 2026',
    )
  })
  it('when a week’s Monday is folded away (a workshop open Tuesday to Saturday), then the week is named from Tuesday', () => {
    expect(zoomRangeLabel('week', '2026-12-04', (d) => !['Sun', 'Mon'].includes(dayjs(d).format('ddd')))).toBe('W49 · 1 Dec – 5 Dec 2026')
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
  // What the board holds while shut, as `workWhileShut` reads it: its shut stretches, and work in them by the day it begins on.
  const worked = (o: { shutWork?: { start: string; end: string }[]; items?: BoardItem[] }) => workWhileShut({ nonWorking: shut, ...o }, TZ)
  it('when someone works this Saturday by their own hours (09:00–13:00), then the board stays on Saturday, before, during and after them', () => {
    const hours = worked({ shutWork: [{ start: '2026-12-05T09:00:00.000Z', end: '2026-12-05T13:00:00.000Z' }] })
    for (const t of ['2026-12-05T07:00:00', '2026-12-05T10:00:00', '2026-12-05T14:20:00'])
      expect(openingDay(at(t), TZ, shut, { worked: hours }), t).toBe('2026-12-05')
    // Sunday nobody works: the coming Monday, Saturday's hours notwithstanding.
    expect(openingDay(at('2026-12-06T10:00:00'), TZ, shut, { worked: hours })).toBe('2026-12-07')
  })
  it('when time was recorded this Saturday, or a step is planned on it, then the board stays on Saturday', () => {
    const record = worked({ shutWork: [{ start: '2026-12-05T10:05:00.000Z', end: '2026-12-05T11:40:00.000Z' }] })
    expect(openingDay(at('2026-12-05T14:20:00'), TZ, shut, { worked: record })).toBe('2026-12-05')
    const step = { id: 1, start: '2026-12-05T10:00:00.000Z', end: '2026-12-05T12:00:00.000Z', outside: false, actual: null } as unknown as BoardItem
    expect(openingDay(at('2026-12-05T14:20:00'), TZ, shut, { worked: worked({ items: [step] }) })).toBe('2026-12-05')
    // Outside work away over the weekend is no one at work here.
    const away = { ...step, start: '2026-12-04T00:00:00.000Z', end: '2026-12-08T00:00:00.000Z', outside: true } as BoardItem
    expect(openingDay(at('2026-12-05T14:20:00'), TZ, shut, { worked: worked({ items: [away] }) })).toBe('2026-12-07')
  })
  it('when the shut stretch runs past what was loaded, then today stays (when it opens again is not known)', () => {
    expect(openingDay(at('2026-12-24T09:00:00'), TZ, shut, { until: at('2026-12-27T00:00:00') })).toBe('2026-12-24')
    expect(openingDay(at('2026-12-24T09:00:00'), TZ, shut, { until: at('2027-01-10T00:00:00') })).toBe('2027-01-04')
  })
})
