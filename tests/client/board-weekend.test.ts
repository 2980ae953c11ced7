// Weekends on the board: with the whole clock every day of the week has its heading and ticks, Saturday and Sunday included;
// with working hours only a weekend nobody works in folds away, and one someone works in (the workshop's or a person's Saturday
// hours, a time record, a bar planned there) shows like an open day, as wide as the hours kept. "Now" on a folded weekend is a
// marker that says so; four weeks name every day shown, the narrow closed ones too (kept wide enough for their date however many
// hours are open), and run to their last day shown.
import { describe, expect, it } from 'vitest'
import dayjs from 'dayjs'
import utc from 'dayjs/plugin/utc'
import timezone from 'dayjs/plugin/timezone'
import { axisScale, dayHeadings, foldedNow, hourTicks } from '@/components/board/board-axis'
import { closedDayHours, dayShown, foldedStretches } from '@/components/board/board-vis'
import { shiftAnchor, visibleWindow, zoomRangeLabel } from '@/lib/board-calendar'
import type { BoardItem } from '@shared/schemas/board'

dayjs.extend(utc)
dayjs.extend(timezone)

// December 2026 in London is on GMT, so local times are UTC times. Week 50: Monday 7 to Sunday 13 December.
const TZ = 'Europe/London'
const at = (day: string, time: string) => new Date(`${day}T${time}:00.000Z`)
const iso = (day: string, time: string) => at(day, time).toISOString()
const window = { from: '2026-12-07', to: '2027-01-03', timeZone: TZ }
const WEEK = ['2026-12-07', '2026-12-08', '2026-12-09', '2026-12-10', '2026-12-11', '2026-12-12', '2026-12-13']

/** Closed hours of a workshop open Monday to Friday 08:30–17:00, from the Friday before week 50 to the Monday after it. */
const weekdaysOnly = [
  { start: iso('2026-12-04', '17:00'), end: iso('2026-12-07', '08:30') },
  { start: iso('2026-12-07', '17:00'), end: iso('2026-12-08', '08:30') },
  { start: iso('2026-12-08', '17:00'), end: iso('2026-12-09', '08:30') },
  { start: iso('2026-12-09', '17:00'), end: iso('2026-12-10', '08:30') },
  { start: iso('2026-12-10', '17:00'), end: iso('2026-12-11', '08:30') },
  { start: iso('2026-12-11', '17:00'), end: iso('2026-12-14', '08:30') },
]
/** The same workshop opening on Saturday 09:00–13:00 as well. */
const withSaturday = [
  ...weekdaysOnly.slice(0, 5),
  { start: iso('2026-12-11', '17:00'), end: iso('2026-12-12', '09:00') },
  { start: iso('2026-12-12', '13:00'), end: iso('2026-12-14', '08:30') },
]

/**
 * The range the timeline opens on a window: an edge lying in a folded stretch steps off it, the start to the stretch's end and
 * the end to its start (vis-timeline's rule for hidden dates, give or take its millisecond).
 */
function opened(w: { start: Date; end: Date }, folded: { start: Date; end: Date }[] | null) {
  const inFold = (t: Date) => (folded ?? []).find((f) => f.start <= t && t < f.end)
  return { start: inFold(w.start)?.end ?? w.start, end: inFold(w.end)?.start ?? w.end }
}

/** A planned bench step (no time records) from `start` to `end`. */
const planned = (id: number, start: string, end: string) => ({ id, start, end, outside: false, actual: null }) as unknown as BoardItem

describe('the week with the whole clock shown', () => {
  it('when the week is shown unfolded, then it runs Monday 00:00 to the next Monday 00:00 and Saturday and Sunday have headings and ticks like the other days', () => {
    const w = visibleWindow('week', '2026-12-09', TZ)
    expect(w).toEqual({ start: at('2026-12-07', '00:00'), end: at('2026-12-14', '00:00') })
    // 7 days of 24 h over 1680 px: 10 px an hour, 240 px a day; a tick every 6 h (60 px, the first step leaving 44 px a label).
    const scale = axisScale(opened(w, null), 1680, null)
    const h = dayHeadings(scale, TZ, [])
    expect(h.map((d) => [d.day, d.x, d.width])).toEqual(WEEK.map((day, i) => [day, i * 240, 240]))
    expect(h[5]!.label).toBe('Saturday 12 December')
    expect(h[6]!.label).toBe('Sunday 13 December')
    const ticks = hourTicks(scale, TZ, [])
    for (const day of ['2026-12-09', '2026-12-12', '2026-12-13'])
      expect(
        ticks.filter((t) => t.day === day).map((t) => t.label),
        day,
      ).toEqual(['00:00', '06:00', '12:00', '18:00'])
  })
  it('when the whole clock is shown, then the week is named Monday to Sunday and day by day steps onto the weekend', () => {
    expect(zoomRangeLabel('week', '2026-12-09', () => true)).toBe('W50 · 7 Dec – 13 Dec 2026')
    expect(shiftAnchor('2026-12-11', 'day', 1, () => true)).toBe('2026-12-12')
    expect(shiftAnchor('2026-12-14', 'day', -1, () => true)).toBe('2026-12-13')
  })
})

describe('working hours only, a weekend nobody works in', () => {
  it('when no one works on the weekend, then it folds away: Monday to Friday have headings, as wide as their 8 h 30 min, and no weekend day', () => {
    const folded = foldedStretches({ nonWorking: weekdaysOnly, closures: [], window })
    // The timeline opens the week on Monday 08:30 and closes it on Friday 17:00: 42 h 30 min over 850 px, 20 px an hour.
    const range = opened(visibleWindow('week', '2026-12-09', TZ), folded)
    expect(range).toEqual({ start: at('2026-12-07', '08:30'), end: at('2026-12-11', '17:00') })
    const h = dayHeadings(axisScale(range, 850, folded), TZ, [])
    expect(h.map((d) => [d.day, d.x, d.width])).toEqual(WEEK.slice(0, 5).map((day, i) => [day, i * 170, 170]))
    expect(dayShown('2026-12-12', TZ, folded)).toBe(false)
    expect(dayShown('2026-12-11', TZ, folded)).toBe(true)
    expect(shiftAnchor('2026-12-11', 'day', 1, (d) => dayShown(d, TZ, folded))).toBe('2026-12-14')
  })
})

describe('working hours only, a Saturday someone works 09:00–13:00', () => {
  // Shown, by hand: Monday to Friday 08:30–17:00 (8 h 30 min each, 42 h 30 min) and Saturday 09:00–13:00 (4 h): 46 h 30 min over
  // 930 px, 20 px an hour. Each weekday is 170 px, Saturday 80 px from x = 850; Sunday has no shown time and no heading.
  const expected = [...WEEK.slice(0, 5).map((day, i) => [day, i * 170, 170]), ['2026-12-12', 850, 80]]
  const weekOf = (folded: { start: Date; end: Date }[]) => {
    const range = opened(visibleWindow('week', '2026-12-09', TZ), folded)
    return { range, scale: axisScale(range, 930, folded) }
  }
  const saturdayFolds = [
    { start: at('2026-12-11', '17:00'), end: at('2026-12-12', '09:00') },
    { start: at('2026-12-12', '13:00'), end: at('2026-12-14', '08:30') },
  ]

  it('when the workshop opens on Saturday morning, then the week runs to Saturday 13:00 and Saturday has its heading, 4 h wide, and its ticks from 09:00', () => {
    const folded = foldedStretches({ nonWorking: withSaturday, closures: [], window })
    expect(folded.slice(-2)).toEqual(saturdayFolds)
    const { range, scale } = weekOf(folded)
    expect(range).toEqual({ start: at('2026-12-07', '08:30'), end: at('2026-12-12', '13:00') })
    const h = dayHeadings(scale, TZ, [])
    expect(h.map((d) => [d.day, d.x, d.width])).toEqual(expected)
    // 80 px: "Saturday 12 December" needs 20 × 7 + 8 = 148 px, "Sat 12 Dec" 10 × 7 + 8 = 78 px.
    expect(h[5]!.label).toBe('Sat 12 Dec')
    // A tick every 3 h (60 px). Weekdays: 08:30, 11:30, 14:30 (17:30 is past the close). Saturday: 09:00; 12:00 would sit 20 px
    // before the end of the week, too close for its label.
    const ticks = hourTicks(scale, TZ, [])
    expect(ticks.filter((t) => t.day === '2026-12-09').map((t) => t.label)).toEqual(['08:30', '11:30', '14:30'])
    expect(ticks.filter((t) => t.day === '2026-12-12').map((t) => [t.label, t.x])).toEqual([['09:00', 850]])
    expect(zoomRangeLabel('week', '2026-12-09', (d) => dayShown(d, TZ, folded))).toBe('W50 · 7 Dec – 12 Dec 2026')
  })
  it('when a person’s own week has Saturday 09:00–13:00 in a workshop shut on Saturdays, then Saturday is shown as if the workshop opened then', () => {
    const folded = foldedStretches({
      nonWorking: weekdaysOnly,
      shutWork: [{ start: iso('2026-12-12', '09:00'), end: iso('2026-12-12', '13:00') }],
      closures: [],
      window,
    })
    expect(folded.slice(-2)).toEqual(saturdayFolds)
    expect(dayHeadings(weekOf(folded).scale, TZ, []).map((d) => [d.day, d.x, d.width])).toEqual(expected)
    expect(dayShown('2026-12-12', TZ, folded)).toBe(true)
    expect(dayShown('2026-12-13', TZ, folded)).toBe(false)
    expect(shiftAnchor('2026-12-11', 'day', 1, (d) => dayShown(d, TZ, folded))).toBe('2026-12-12')
    expect(shiftAnchor('2026-12-12', 'day', 1, (d) => dayShown(d, TZ, folded))).toBe('2026-12-14')
  })
  it('when time was recorded on Saturday 09:10–12:40, then the hours kept are widened to whole hours, 09:00–13:00', () => {
    const folded = foldedStretches({
      nonWorking: weekdaysOnly,
      shutWork: [{ start: iso('2026-12-12', '09:10'), end: iso('2026-12-12', '12:40') }],
      closures: [],
      window,
    })
    expect(folded.slice(-2)).toEqual(saturdayFolds)
    expect(dayHeadings(weekOf(folded).scale, TZ, []).map((d) => [d.day, d.x, d.width])).toEqual(expected)
  })
  it('when a bench step is planned on Saturday 10:00–12:00 in a workshop shut on Saturdays, then those hours stay on the board', () => {
    const items = [planned(1, iso('2026-12-12', '10:00'), iso('2026-12-12', '12:00')), planned(2, iso('2026-12-09', '09:00'), iso('2026-12-09', '11:00'))]
    const folded = foldedStretches({ nonWorking: weekdaysOnly, items, closures: [], window })
    expect(folded.slice(-2)).toEqual([
      { start: at('2026-12-11', '17:00'), end: at('2026-12-12', '10:00') },
      { start: at('2026-12-12', '12:00'), end: at('2026-12-14', '08:30') },
    ])
    // Outside work away over the weekend, and a step under way (its hours come from its time records), keep nothing.
    const away = { ...planned(3, iso('2026-12-11', '00:00'), iso('2026-12-15', '00:00')), outside: true } as BoardItem
    const running = { ...planned(4, iso('2026-12-11', '15:00'), iso('2026-12-12', '15:00')), actual: { start: iso('2026-12-11', '15:00') } } as BoardItem
    expect(foldedStretches({ nonWorking: weekdaysOnly, items: [away, running], closures: [], window }).slice(-1)).toEqual([
      { start: at('2026-12-11', '17:00'), end: at('2026-12-14', '08:30') },
    ])
  })
})

describe('now, while the weekend is folded away', () => {
  // Week 51 (14–18 December) as week 50: open Monday to Friday 08:30–17:00.
  const twoWeeks = [
    ...weekdaysOnly,
    ...['2026-12-14', '2026-12-15', '2026-12-16', '2026-12-17'].map((d) => ({
      start: iso(d, '17:00'),
      end: `${dayjs(d).add(1, 'day').format('YYYY-MM-DD')}T08:30:00.000Z`,
    })),
    { start: iso('2026-12-18', '17:00'), end: iso('2026-12-21', '08:30') },
  ]
  const folded = foldedStretches({ nonWorking: twoWeeks, closures: [], window })
  const scaleOf = (day: string, width: number, f = folded) => axisScale(opened(visibleWindow('week', day, TZ), f), width, f)
  const saturday = at('2026-12-12', '14:20').getTime()

  it('when it is Saturday 14:20 and the week shown is that one, then "now" is a marker at the end of Friday that names the time and the fold', () => {
    // Week 50 over 850 px: Friday ends at 850 px, where the week shown ends.
    expect(foldedNow(scaleOf('2026-12-09', 850), saturday, TZ)).toEqual({
      x: 850,
      title:
        'Now: Saturday 12 December 14:20 — the workshop is shut, and Fri 11 Dec 17:00 to Mon 14 Dec 08:30 is folded away (untick Working hours only to see it).',
    })
  })
  it('when it is Saturday 14:20 and the coming week is shown, then the marker is at its left edge, still naming Saturday (not Monday 08:30)', () => {
    const m = foldedNow(scaleOf('2026-12-16', 850), saturday, TZ)
    expect(m?.x).toBe(0)
    expect(m?.title).toMatch(/^Now: Saturday 12 December 14:20 — the workshop is shut/)
  })
  it('when someone worked Saturday 09:00–13:00 and it is 14:20, then the marker is at the end of those hours', () => {
    const f = foldedStretches({
      nonWorking: twoWeeks,
      shutWork: [{ start: iso('2026-12-12', '09:00'), end: iso('2026-12-12', '13:00') }],
      closures: [],
      window,
    })
    // Five days of 8 h 30 min and Saturday's 4 h over 930 px: 20 px an hour, Saturday's hours end at 930 px.
    const m = foldedNow(scaleOf('2026-12-09', 930, f), saturday, TZ)
    expect(m?.x).toBe(930)
    expect(m?.title).toContain('Sat 12 Dec 13:00 to Mon 14 Dec 08:30 is folded away')
  })
  it('when it is Tuesday 20:00, then the marker is where Tuesday meets Wednesday; in working hours or in another week, none', () => {
    const scale = scaleOf('2026-12-09', 850)
    expect(foldedNow(scale, at('2026-12-08', '20:00').getTime(), TZ)).toMatchObject({
      x: 340,
      title: expect.stringContaining('Now: Tuesday 8 December 20:00 — the workshop is shut, and Tue 8 Dec 17:00 to Wed 9 Dec 08:30 is folded away'),
    })
    // Open time: the timeline's own line is right.
    expect(foldedNow(scale, at('2026-12-09', '10:00').getTime(), TZ)).toBeNull()
    // The Saturday after week 51 is not at week 50.
    expect(foldedNow(scale, at('2026-12-19', '14:20').getTime(), TZ)).toBeNull()
  })
})

describe('four weeks with working hours only', () => {
  // Weeks 50–53 (7 December to 3 January) open Monday to Friday 08:30–17:00, closed Tuesday 22 (stocktake), Friday 25 (Christmas
  // Day), Monday 28 (Boxing Day, moved from the Saturday) and Friday 1 January (New Year's Day).
  const closures = [
    { name: 'Workshop closed: stocktake', startsOn: '2026-12-22', endsOn: '2026-12-22' },
    { name: 'Bank holiday: Christmas Day', startsOn: '2026-12-25', endsOn: '2026-12-25' },
    { name: 'Bank holiday: Boxing Day', startsOn: '2026-12-28', endsOn: '2026-12-28' },
    { name: "Bank holiday: New Year's Day", startsOn: '2027-01-01', endsOn: '2027-01-01' },
  ]
  /** The closed stretches between openings, from Friday 4 December's close to Monday 4 January's opening. */
  const nonWorking: { start: string; end: string }[] = []
  let close = iso('2026-12-04', '17:00')
  for (let d = dayjs('2026-12-07'); !d.isAfter(dayjs('2027-01-04')); d = d.add(1, 'day')) {
    const day = d.format('YYYY-MM-DD')
    if (d.day() === 0 || d.day() === 6 || closures.some((c) => c.startsOn === day)) continue
    nonWorking.push({ start: close, end: iso(day, '08:30') })
    close = iso(day, '17:00')
  }
  const folded = foldedStretches({ nonWorking, closures, window })

  it('when the closed days are narrow columns, then each still has its date, in small type, and the open days theirs', () => {
    // Shown, by hand: 16 open days of 8 h 30 min and 4 closed days of 3 h (09:00–12:00): 148 h over 666 px, 4.5 px an hour, so
    // an open day is 38.25 px ("Mon 7" needs 5 × 7 + 8 = 43 px: the day's number alone) and a closed one 13.5 px, where "22"
    // needs 2 × 7 + 8 = 22 px in ordinary type and 2 × 5.5 + 2 = 13 px in small type.
    const range = opened(visibleWindow('month', '2026-12-09', TZ), folded)
    expect(range).toEqual({ start: at('2026-12-07', '08:30'), end: at('2027-01-01', '12:00') })
    const h = dayHeadings(axisScale(range, 666, folded), TZ, closures)
    const r = (n: number) => Math.round(n * 100) / 100
    expect(h.map((d) => [d.day, r(d.x), r(d.width), d.label, d.compact])).toEqual([
      ['2026-12-07', 0, 38.25, '7', false],
      ['2026-12-08', 38.25, 38.25, '8', false],
      ['2026-12-09', 76.5, 38.25, '9', false],
      ['2026-12-10', 114.75, 38.25, '10', false],
      ['2026-12-11', 153, 38.25, '11', false],
      ['2026-12-14', 191.25, 38.25, '14', false],
      ['2026-12-15', 229.5, 38.25, '15', false],
      ['2026-12-16', 267.75, 38.25, '16', false],
      ['2026-12-17', 306, 38.25, '17', false],
      ['2026-12-18', 344.25, 38.25, '18', false],
      ['2026-12-21', 382.5, 38.25, '21', false],
      ['2026-12-22', 420.75, 13.5, '22', true],
      ['2026-12-23', 434.25, 38.25, '23', false],
      ['2026-12-24', 472.5, 38.25, '24', false],
      ['2026-12-25', 510.75, 13.5, '25', true],
      ['2026-12-28', 524.25, 13.5, '28', true],
      ['2026-12-29', 537.75, 38.25, '29', false],
      ['2026-12-30', 576, 38.25, '30', false],
      ['2026-12-31', 614.25, 38.25, '31', false],
      ['2027-01-01', 652.5, 13.5, '1', true],
    ])
    expect(h.find((d) => d.day === '2026-12-25')!.title).toBe('Friday 25 December 2026 — Bank holiday: Christmas Day')
    // Narrower still (600 px: 12.16 px a closed day, under the 13 px "22" needs in small type), no label: its title names the day.
    const narrow = dayHeadings(axisScale(range, 600, folded), TZ, closures).find((d) => d.day === '2026-12-22')!
    expect([narrow.label, narrow.title]).toEqual(['', 'Tuesday 22 December 2026 — Workshop closed: stocktake'])
  })
  it('when four weeks end on a closed Friday and a folded weekend, then they are named to that Friday, 1 January', () => {
    expect(zoomRangeLabel('month', '2026-12-09', (d) => dayShown(d, TZ, folded))).toBe('W50–W53 · 7 Dec – 1 Jan 2027')
    // With the whole clock, to the Sunday.
    expect(zoomRangeLabel('month', '2026-12-09', () => true)).toBe('W50–W53 · 7 Dec – 3 Jan 2027')
  })
})

describe('four weeks of a workshop that works Saturdays, with working hours only', () => {
  // Weeks 50–53 open Monday to Saturday 08:30–17:00, closed on the same four days as above: Tuesday 22 (stocktake), Friday 25,
  // Monday 28 December and Friday 1 January. Saturday 26 December is open (Boxing Day's holiday is the Monday).
  const closures = [
    { name: 'Workshop closed: stocktake', startsOn: '2026-12-22', endsOn: '2026-12-22' },
    { name: 'Bank holiday: Christmas Day', startsOn: '2026-12-25', endsOn: '2026-12-25' },
    { name: 'Bank holiday: Boxing Day', startsOn: '2026-12-28', endsOn: '2026-12-28' },
    { name: "Bank holiday: New Year's Day", startsOn: '2027-01-01', endsOn: '2027-01-01' },
  ]
  const nonWorking: { start: string; end: string }[] = []
  let close = iso('2026-12-05', '17:00')
  for (let d = dayjs('2026-12-07'); !d.isAfter(dayjs('2027-01-04')); d = d.add(1, 'day')) {
    const day = d.format('YYYY-MM-DD')
    if (d.day() === 0 || closures.some((c) => c.startsOn === day)) continue
    nonWorking.push({ start: close, end: iso(day, '08:30') })
    close = iso(day, '17:00')
  }
  const data = { nonWorking, closures, window }
  const fourWeeks = visibleWindow('month', '2026-12-09', TZ)
  const closedOf = (folded: { start: Date; end: Date }[], width: number) =>
    dayHeadings(axisScale(opened(fourWeeks, folded), width, folded), TZ, closures)
      .filter((d) => d.closed)
      .map((d) => ({ day: d.day, width: Math.round(d.width * 100) / 100, label: d.label, compact: d.compact }))

  it('when the closed days would keep three hours, then 666 px wide they are 11 px, too narrow for a date of two figures', () => {
    // By hand: 20 open days (16 weekdays and 4 Saturdays) of 8 h 30 min = 170 h, and 4 closed days of 3 h = 12 h: 182 h over
    // 666 px is 3.66 px an hour, so a closed day is 10.98 px, under the 13 px "22" needs in small type (only New Year's Day's
    // one figure, 1 × 5.5 + 2 = 7.5 px, fits).
    expect(closedOf(foldedStretches(data), 666).map((d) => [d.width, d.label])).toEqual([
      [10.98, ''],
      [10.98, ''],
      [10.98, ''],
      [10.98, '1'],
    ])
  })
  it('when the board is 666 px wide, then a closed day keeps 5 h 15 min, is 18.3 px wide and carries its date', () => {
    // By hand: a closed day of k hours is k × 666 ÷ (170 + 4k) px; 18 px needs k ≥ 18 × 170 ÷ (666 − 4 × 18) = 3060 ÷ 594 =
    // 5.15 h, to the quarter hour 5 h 15 min: 5.25 × 666 ÷ 191 = 18.31 px (5 h would give 5 × 666 ÷ 190 = 17.53 px).
    const hours = closedDayHours(data, fourWeeks, 666)
    expect(hours).toBe(5.25)
    const folded = foldedStretches(data, 4, hours)
    // Kept from 09:00: Tuesday 22 December 09:00–14:15 lies between the folds either side.
    expect(folded.find((f) => f.end.getTime() === at('2026-12-22', '09:00').getTime())).toBeTruthy()
    expect(folded.find((f) => f.start.getTime() === at('2026-12-22', '14:15').getTime())).toBeTruthy()
    // "22" in ordinary type needs 2 × 7 + 8 = 22 px: the small type; "1" needs 15 px: ordinary type.
    expect(closedOf(folded, 666)).toEqual([
      { day: '2026-12-22', width: 18.31, label: '22', compact: true },
      { day: '2026-12-25', width: 18.31, label: '25', compact: true },
      { day: '2026-12-28', width: 18.31, label: '28', compact: true },
      { day: '2027-01-01', width: 18.31, label: '1', compact: false },
    ])
  })
  it('when three hours already make a closed day wide enough (1400 px), or no day is closed, then it keeps its three hours', () => {
    // 3 × 1400 ÷ 182 = 23.08 px.
    expect(closedDayHours(data, fourWeeks, 1400)).toBe(3)
    expect(closedDayHours({ ...data, closures: [] }, fourWeeks, 666)).toBe(3)
  })
  it('when the closed days could not all be 18 px wide (a closure over four weeks on a narrow board), then they keep the whole day', () => {
    const closedAll = [{ name: 'Workshop closed: refit', startsOn: '2026-12-07', endsOn: '2027-01-03' }]
    // 28 closed days × 18 px = 504 px, more than the 500 px there are: each keeps the whole day, and they share the width.
    expect(closedDayHours({ ...data, closures: [...closures, ...closedAll] }, fourWeeks, 500)).toBe(24)
  })
})
