// The board's own time axis: where an instant falls when nights, weekends and closed days are folded away, a heading for
// every day shown (closed days marked, not dropped), hour ticks that start from each day's opening alike, and drops
// across a fold landing at the time under the pointer.
import { describe, expect, it } from 'vitest'
import dayjs from 'dayjs'
import isoWeek from 'dayjs/plugin/isoWeek'
import { axisScale, dayHeadings, dragStart, hourTicks, timeAt, xAt } from '@/components/board/board-axis'
import { foldedStretches } from '@/components/board/board-vis'

dayjs.extend(isoWeek)

// December 2026 in London is on GMT, so local times are UTC times.
const at = (day: string, time: string) => new Date(`${day}T${time}:00.000Z`)
const TZ = 'Europe/London'
const iso = (day: string, time: string) => at(day, time).toISOString()

// The demo workshop's week before Christmas: open Monday to Friday 08:30–12:30 and 13:15–17:00; closed Monday 21 (stocktake),
// Friday 25 (Christmas Day) and Monday 28 (Boxing Day, moved from the Saturday).
const closures = [
  { name: 'Workshop closed: stocktake', startsOn: '2026-12-21', endsOn: '2026-12-21' },
  { name: 'Bank holiday: Christmas Day', startsOn: '2026-12-25', endsOn: '2026-12-25' },
  { name: 'Bank holiday: Boxing Day', startsOn: '2026-12-28', endsOn: '2026-12-28' },
]
const lunch = (day: string) => ({ start: iso(day, '12:30'), end: iso(day, '13:15') })
const w52 = {
  window: { from: '2026-12-21', to: '2027-01-17', timeZone: TZ },
  nonWorking: [
    { start: iso('2026-12-18', '17:00'), end: iso('2026-12-22', '08:30') },
    lunch('2026-12-22'),
    { start: iso('2026-12-22', '17:00'), end: iso('2026-12-23', '08:30') },
    lunch('2026-12-23'),
    { start: iso('2026-12-23', '17:00'), end: iso('2026-12-24', '08:30') },
    lunch('2026-12-24'),
    { start: iso('2026-12-24', '17:00'), end: iso('2026-12-29', '08:30') },
  ],
  closures,
}

/** Closed hours of a workshop open Monday to Friday 08:30–17:00 (lunch left out), from the evening of `from` to the evening of `to`. */
function nights(from: string, to: string) {
  const out: { start: string; end: string }[] = []
  for (let d = dayjs(from); !d.isAfter(dayjs(to)); d = d.add(1, 'day')) {
    if (d.isoWeekday() > 5) continue
    const next = d.add(d.isoWeekday() === 5 ? 3 : 1, 'day').format('YYYY-MM-DD')
    out.push({ start: iso(d.format('YYYY-MM-DD'), '17:00'), end: iso(next, '08:30') })
  }
  return out
}

describe('folding to working hours', () => {
  it('when a weekday is closed, then a narrow stretch of it (09:00–12:00) stays on the board to mark it', () => {
    const f = foldedStretches(w52)
    expect(f).toEqual([
      { start: at('2026-12-18', '17:00'), end: at('2026-12-21', '09:00') },
      { start: at('2026-12-21', '12:00'), end: at('2026-12-22', '08:30') },
      { start: at('2026-12-22', '17:00'), end: at('2026-12-23', '08:30') },
      { start: at('2026-12-23', '17:00'), end: at('2026-12-24', '08:30') },
      { start: at('2026-12-24', '17:00'), end: at('2026-12-25', '09:00') },
      { start: at('2026-12-25', '12:00'), end: at('2026-12-28', '09:00') },
      { start: at('2026-12-28', '12:00'), end: at('2026-12-29', '08:30') },
    ])
  })
})

describe('the folded scale', () => {
  // Shown: Mon 21 09:00 to Fri 25 12:00, 1000 px wide. Visible time, by hand: Mon 3 h + Tue, Wed, Thu 8 h 30 min each + Fri 3 h
  // = 31 h 30 min, so one hour is 1000 / 31.5 = 31.746 px.
  const scale = axisScale({ start: at('2026-12-21', '09:00'), end: at('2026-12-25', '12:00') }, 1000, foldedStretches(w52))
  const hour = 1000 / 31.5

  it('when an instant is placed, then the folded time before it takes no width', () => {
    expect(xAt(scale, at('2026-12-21', '09:00'))).toBeCloseTo(0, 6)
    // Tuesday opens right after Monday's three hours.
    expect(xAt(scale, at('2026-12-22', '08:30'))).toBeCloseTo(3 * hour, 6)
    // Wednesday 13:15: Mon 3 h + Tue 8.5 h + Wed 08:30–13:15 (4.75 h) = 16.25 h.
    expect(xAt(scale, at('2026-12-23', '13:15'))).toBeCloseTo(16.25 * hour, 6)
    // A folded instant sits where its fold starts: Monday 20:00 at Monday 12:00, the same place as Tuesday 08:30.
    expect(xAt(scale, at('2026-12-21', '20:00'))).toBeCloseTo(3 * hour, 6)
  })
  it('when a place is read back, then it gives the instant drawn there', () => {
    expect(timeAt(scale, 16.25 * hour).toISOString()).toBe(iso('2026-12-23', '13:15'))
    expect(timeAt(scale, 3 * hour + 1).getTime()).toBeGreaterThanOrEqual(at('2026-12-22', '08:30').getTime())
  })
})

describe('day headings', () => {
  it('when the week before Christmas is folded, then every day shown has its heading and the closed ones say they are closed', () => {
    const scale = axisScale({ start: at('2026-12-21', '09:00'), end: at('2026-12-25', '12:00') }, 1000, foldedStretches(w52))
    const hour = 1000 / 31.5
    const h = dayHeadings(scale, TZ, closures)
    expect(h.map((d) => [d.day, d.closed])).toEqual([
      ['2026-12-21', 'Workshop closed: stocktake'],
      ['2026-12-22', null],
      ['2026-12-23', null],
      ['2026-12-24', null],
      ['2026-12-25', 'Bank holiday: Christmas Day'],
    ])
    // Tuesday's heading starts after Monday's three hours and spans its 8 h 30 min.
    expect(h[1]!.x).toBeCloseTo(3 * hour, 6)
    expect(h[1]!.width).toBeCloseTo(8.5 * hour, 6)
    expect(h[1]!.label).toBe('Tuesday 22 December')
    // Monday's 3 h are 95 px: room for "Mon 21 Dec" (10 characters).
    expect(h[0]!.width).toBeCloseTo(3 * hour, 6)
    expect(h[0]!.label).toBe('Mon 21 Dec')
    expect(h[0]!.note).toBe('closed')
    expect(h[1]!.note).toBeNull()
    expect(h[0]!.title).toBe('Monday 21 December 2026 — Workshop closed: stocktake')
  })
  it('when the whole clock is shown from Monday 06:00, then Monday has its heading from the left edge', () => {
    // W50 unfolded: Mon 7 06:00 to Fri 11 19:00 = 4 days 13 h = 109 h over 1090 px, 10 px an hour.
    const scale = axisScale({ start: at('2026-12-07', '06:00'), end: at('2026-12-11', '19:00') }, 1090, null)
    const h = dayHeadings(scale, TZ, [])
    expect(h.map((d) => d.day)).toEqual(['2026-12-07', '2026-12-08', '2026-12-09', '2026-12-10', '2026-12-11'])
    expect(h[0]).toMatchObject({ x: 0, width: 180, closed: null })
    expect(h[0]!.label).toBe('Monday 7 December')
    expect(h[4]).toMatchObject({ x: 900, width: 190 })
  })
  it('when the days are of one width, then they are named alike, even where a longer weekday name would not fit', () => {
    // Mon 7 to Fri 11 Dec folded to 08:30–17:00, 147 px a day: "Wednesday 9 December" needs 20 × 7 + 8 = 148 px, so every day
    // is named the short way, "Mon 7 Dec" as "Wed 9 Dec".
    const folded = foldedStretches({ nonWorking: nights('2026-12-04', '2026-12-11'), closures: [], window: w52.window })
    const scale = axisScale({ start: at('2026-12-07', '08:30'), end: at('2026-12-11', '17:00') }, 5 * 147, folded)
    expect(dayHeadings(scale, TZ, []).map((d) => d.label)).toEqual(['Mon 7 Dec', 'Tue 8 Dec', 'Wed 9 Dec', 'Thu 10 Dec', 'Fri 11 Dec'])
  })
  it('when four weeks are shown, then the narrow days are named by weekday and date, or the date alone', () => {
    // 7 px an hour: an open day of 8 h 30 min is 59.5 px ("Mon 7" fits, "Mon 7 Dec" does not).
    const days = ['2026-12-07', '2026-12-08']
    const nonWorking = [
      { start: iso('2026-12-04', '17:00'), end: iso('2026-12-07', '08:30') },
      { start: iso('2026-12-07', '17:00'), end: iso('2026-12-08', '08:30') },
      { start: iso('2026-12-08', '17:00'), end: iso('2026-12-09', '08:30') },
    ]
    const scale = axisScale(
      { start: at(days[0]!, '08:30'), end: at(days[1]!, '17:00') },
      7 * 17,
      foldedStretches({ nonWorking, closures: [], window: w52.window }),
    )
    expect(dayHeadings(scale, TZ, []).map((d) => d.label)).toEqual(['Mon 7', 'Tue 8'])
  })
  it('when a closed day is too narrow for even its date, then it shows no figure (a clipped "25" would read "2"), and its title names it', () => {
    // Christmas Day closed, four weeks at 3.5 px an hour: its kept 09:00–12:00 is 10.5 px; "25" needs 2 × 7 + 8 = 22 px.
    const nonWorking = [
      { start: iso('2026-12-24', '17:00'), end: iso('2026-12-29', '08:30') },
      { start: iso('2026-12-29', '17:00'), end: iso('2026-12-30', '08:30') },
    ]
    const closures = [{ name: 'Bank holiday: Christmas Day', startsOn: '2026-12-25', endsOn: '2026-12-25' }]
    const folded = foldedStretches({ nonWorking, closures, window: w52.window })
    const scale = axisScale({ start: at('2026-12-24', '08:30'), end: at('2026-12-29', '17:00') }, 3.5 * (8.5 + 3 + 8.5), folded)
    const h = dayHeadings(scale, TZ, closures)
    const xmas = h.find((d) => d.day === '2026-12-25')!
    expect(xmas.width).toBeCloseTo(10.5, 6)
    expect(xmas.label).toBe('')
    expect(xmas.title).toBe('Friday 25 December 2026 — Bank holiday: Christmas Day')
    // The open days beside it, 29.75 px each, still carry their date.
    expect(h.find((d) => d.day === '2026-12-24')!.label).toBe('24')
  })
})

describe('hour ticks', () => {
  it('when days are folded to their open hours, then every open day has its ticks at the same times from its opening, and closed days none', () => {
    // 31.7 px an hour: a tick every 2 h leaves 63 px a label. Each day: 08:30, 10:30, 12:30, 14:30; 16:30 would sit 16 px before
    // the next day's 08:30 and is left out.
    const scale = axisScale({ start: at('2026-12-21', '09:00'), end: at('2026-12-25', '12:00') }, 1000, foldedStretches(w52))
    const ticks = hourTicks(scale, TZ, closures)
    const byDay = new Map<string, string[]>()
    for (const t of ticks) byDay.set(t.day, [...(byDay.get(t.day) ?? []), t.label])
    expect(Object.fromEntries(byDay)).toEqual({
      '2026-12-22': ['08:30', '10:30', '12:30', '14:30'],
      '2026-12-23': ['08:30', '10:30', '12:30', '14:30'],
      '2026-12-24': ['08:30', '10:30', '12:30', '14:30'],
    })
  })
  it('when four weeks are folded to their open hours, then no ticks are drawn: each day would only get its opening', () => {
    // Mon 7 to Thu 31 Dec (opened a millisecond after 08:30, as the timeline opens it): 19 open days of 8 h 30 min = 161 h 30 min
    // in 700 px is 4.3 px an hour; a label needs 44 px, so 12 h between ticks: one a day.
    const folded = foldedStretches({ nonWorking: nights('2026-12-04', '2026-12-31'), closures: [], window: w52.window })
    const opened = new Date(at('2026-12-07', '08:30').getTime() + 1)
    expect(hourTicks(axisScale({ start: opened, end: at('2026-12-31', '17:00') }, 700, folded), TZ, [])).toEqual([])
    // One week at the same width (42 h 30 min, 16.5 px an hour) ticks every 3 h, the first day's opening included.
    const week = axisScale({ start: opened, end: at('2026-12-11', '17:00') }, 700, folded)
    expect(
      hourTicks(week, TZ, [])
        .filter((t) => t.day === '2026-12-07')
        .map((t) => t.label),
    ).toEqual(['08:30', '11:30', '14:30'])
  })
  it('when the whole clock is shown, then ticks run from midnight on every day, the first day as the others', () => {
    // 10 px an hour: a tick every 6 h (60 px); Monday from 06:00 on the left edge.
    const scale = axisScale({ start: at('2026-12-07', '06:00'), end: at('2026-12-09', '00:00') }, 420, null)
    expect(hourTicks(scale, TZ, []).map((t) => `${t.day} ${t.label}`)).toEqual([
      '2026-12-07 06:00',
      '2026-12-07 12:00',
      '2026-12-07 18:00',
      '2026-12-08 00:00',
      '2026-12-08 06:00',
      '2026-12-08 12:00',
      '2026-12-08 18:00',
    ])
  })
})

describe('dragging across a fold', () => {
  it('when a bar is dragged from Friday over the folded weekend and dropped on Monday 14 at 13:15, then it starts at Monday 13:15', () => {
    // Four weeks from Mon 7 Dec, nights and weekends folded; the bar starts Fri 11 Dec 14:00 and is grabbed at its start.
    const nonWorking = [
      { start: iso('2026-12-07', '17:00'), end: iso('2026-12-08', '08:30') },
      { start: iso('2026-12-08', '17:00'), end: iso('2026-12-09', '08:30') },
      { start: iso('2026-12-09', '17:00'), end: iso('2026-12-10', '08:30') },
      { start: iso('2026-12-10', '17:00'), end: iso('2026-12-11', '08:30') },
      { start: iso('2026-12-11', '17:00'), end: iso('2026-12-14', '08:30') },
      { start: iso('2026-12-14', '17:00'), end: iso('2026-12-15', '08:30') },
    ]
    const scale = axisScale(
      { start: at('2026-12-07', '08:30'), end: at('2026-12-15', '17:00') },
      1200,
      foldedStretches({ nonWorking, closures: [], window: w52.window }),
    )
    const grab = xAt(scale, at('2026-12-11', '14:00'))
    const drop = xAt(scale, at('2026-12-14', '13:15'))
    const start = dragStart({ start: at('2026-12-11', '14:00'), grabX: grab, pointerX: drop, scale })
    expect(start.toISOString()).toBe(iso('2026-12-14', '13:15'))
  })
})
