// The board's own time axis (pure): where an instant falls across the timeline when stretches are folded away (as vis-timeline
// draws it), a heading for every day shown with closed days marked, hour ticks counted from each day's opening, "now" when it
// lies in folded time, and a drag's start.
import dayjs from 'dayjs'
import { dayStart, localDay } from '@/lib/board-calendar'

export interface Stretch {
  start: Date
  end: Date
}

/** What is shown: the range, its width in pixels, and the folded stretches (sorted), as milliseconds. */
export interface AxisScale {
  start: number
  end: number
  width: number
  folded: { start: number; end: number }[]
}

export interface Closure {
  name: string
  startsOn: string
  endsOn: string
}

export function axisScale(range: Stretch, width: number, folded: Stretch[] | null): AxisScale {
  return {
    start: range.start.getTime(),
    end: range.end.getTime(),
    width,
    folded: (folded ?? []).map((f) => ({ start: f.start.getTime(), end: f.end.getTime() })).sort((a, b) => a.start - b.start),
  }
}

// vis-timeline takes out only the folds wholly inside the range (starting at or after its start, ending before its end); an
// instant inside any fold is drawn where that fold starts. The same here, so headings and drops line up with the bars.
const inside = (s: AxisScale) => s.folded.filter((f) => f.start >= s.start && f.end < s.end)
const foldAt = (s: AxisScale, t: number) => s.folded.find((f) => t >= f.start && t < f.end)
const visibleMs = (s: AxisScale) => s.end - s.start - inside(s).reduce((t, f) => t + f.end - f.start, 0)

/** Pixels per millisecond of shown time. */
export const pxPerMs = (s: AxisScale) => s.width / Math.max(1, visibleMs(s))

/** Where an instant is drawn, in pixels from the left of the shown range. */
export function xAt(s: AxisScale, at: Date | number): number {
  let t = typeof at === 'number' ? at : at.getTime()
  t = foldAt(s, t)?.start ?? t
  const before = inside(s)
    .filter((f) => t >= f.end)
    .reduce((sum, f) => sum + f.end - f.start, 0)
  return (t - s.start - before) * pxPerMs(s)
}

/** The instant drawn at `x` pixels from the left of the shown range (to the millisecond). */
export function timeAt(s: AxisScale, x: number): Date {
  const shown = (visibleMs(s) * x) / s.width
  let hidden = 0,
    seen = 0,
    previous = s.start
  for (const f of inside(s)) {
    seen += f.start - previous
    previous = f.end
    if (seen >= shown) break
    hidden += f.end - f.start
  }
  return new Date(Math.round(s.start + shown + hidden))
}

const FIVE_MIN = 5 * 60_000

/**
 * Where a dragged bar starts: moved by the time between the place it was grabbed and the pointer, both read on the folded
 * scale (so a fold crossed on the way counts its hours), to five minutes.
 */
export function dragStart(o: { start: Date; grabX: number; pointerX: number; scale: AxisScale }): Date {
  const moved = timeAt(o.scale, o.pointerX).getTime() - timeAt(o.scale, o.grabX).getTime()
  return new Date(Math.round((o.start.getTime() + moved) / FIVE_MIN) * FIVE_MIN)
}

export interface DayHeading {
  /** YYYY-MM-DD in the workshop's zone. */
  day: string
  x: number
  width: number
  label: string
  /** The label is the date alone in the axis's small type: a day too narrow for it in ordinary type (a closed day in four weeks). */
  compact: boolean
  /** The closure's name on a closed day, else null. */
  closed: string | null
  /** "closed" under the date of a closed day wide enough to say it (a narrower one shows only its shading). */
  note: string | null
  title: string
}

/** The closure that holds a day, if any. */
export const closureOn = (closures: Closure[], day: string) => closures.find((c) => c.startsOn <= day && day <= c.endsOn) ?? null

const nextDay = (day: string) => dayjs(day).add(1, 'day').format('YYYY-MM-DD')

/** The days the range touches, each with its part of the range (start and end in milliseconds). */
function daysOf(s: AxisScale, tz: string): { day: string; from: number; to: number }[] {
  const out: { day: string; from: number; to: number }[] = []
  for (let day = localDay(s.start, tz); ; day = nextDay(day)) {
    const from = dayStart(day, tz).getTime()
    if (from >= s.end) break
    out.push({ day, from: Math.max(from, s.start), to: Math.min(dayStart(nextDay(day), tz).getTime(), s.end) })
  }
  return out
}

/** Characters of a label a width holds (our axis font: about 7 px a character, 8 px of padding). */
const fits = (text: string, width: number) => text.length * 7 + 8 <= width
/** The same in the axis's small type for the narrowest days (10 px figures drawn closer, under 5.5 px each; 2 px for the day's rule). */
const fitsCompact = (text: string, width: number) => text.length * 5.5 + 2 <= width

/**
 * A heading for every day with shown time, from where it starts on screen to where it ends (a day cut by the range's edge is
 * named from the edge); a closed day carries its closure's name. Labels take one form for all the days of ordinary width (the
 * longest every one of them holds), and a shorter one where a day is narrower (a closed day, a day cut by the edge); where not
 * even the date fits in ordinary type (a closed day's narrow column in four weeks), the date in small type; none where not even
 * that fits (its title still names the day).
 */
export function dayHeadings(s: AxisScale, tz: string, closures: Closure[]): DayHeading[] {
  const days = daysOf(s, tz)
    .map((d) => {
      const x = xAt(s, d.from)
      const date = dayjs.tz(`${d.day} 12:00`, tz)
      return { ...d, x, width: xAt(s, d.to) - x, date, labels: [date.format('dddd D MMMM'), date.format('ddd D MMM'), date.format('ddd D'), date.format('D')] }
    })
    .filter((d) => d.width >= 0.5)
  const last = 3
  const longest = (d: (typeof days)[number]) => {
    const i = d.labels.findIndex((l) => fits(l, d.width))
    return i < 0 ? last : i
  }
  const widest = Math.max(0, ...days.map((d) => d.width))
  const common = Math.max(0, ...days.filter((d) => d.width >= widest * 0.6).map(longest))
  return days.map((d) => {
    const closure = closureOn(closures, d.day)
    const label = d.labels[Math.max(common, longest(d))]!
    // A clipped "25" reads "2": a label is whole or not there.
    const compact = !fits(label, d.width) && fitsCompact(label, d.width)
    return {
      day: d.day,
      x: d.x,
      width: d.width,
      label: fits(label, d.width) || compact ? label : '',
      compact,
      closed: closure?.name ?? null,
      note: closure && fits('closed', d.width) ? 'closed' : null,
      title: `${d.date.format('dddd D MMMM YYYY')}${closure ? ` — ${closure.name}` : ''}`,
    }
  })
}

/** "Now" drawn where it lies in folded time: a marker at the fold's place, and what it says. */
export interface FoldedNow {
  x: number
  title: string
}

/**
 * "Now" while it lies in a folded stretch (a night, a weekend, a closure folded away), where that stretch meets the range shown:
 * at the end of the last shown minute before it (the range's edge when the stretch lies at an edge). vis-timeline's own line
 * would be drawn at the same place with nothing to say it is not that minute — on a Saturday, at Monday 08:30 of the week
 * shown — so the marker names the time and the folded stretch. Null when now is shown time, or its stretch is not at the range.
 */
export function foldedNow(s: AxisScale, now: number, tz: string): FoldedNow | null {
  const f = foldAt(s, now)
  // The timeline steps its edges off a fold by a millisecond or so: a minute's slack.
  if (!f || f.end < s.start - 60_000 || f.start > s.end + 60_000) return null
  const x = Math.min(s.width, Math.max(0, xAt(s, f.start)))
  const clock = (t: number) => dayjs(t).tz(tz)
  const when = (t: number) => clock(t).format('ddd D MMM HH:mm')
  return {
    x,
    title: `Now: ${clock(now).format('dddd D MMMM HH:mm')} — the workshop is shut, and ${when(f.start)} to ${when(f.end)} is folded away (untick Working hours only to see it).`,
  }
}

export interface HourTick {
  day: string
  at: number
  x: number
  label: string
}

const STEPS_MIN = [15, 30, 60, 120, 180, 240, 360, 720]

/**
 * Hour ticks for the open days shown: from each day's first unfolded moment (its opening when nights are folded, midnight when
 * not) every step, the smallest step that leaves `minGap` pixels a label; none on closed days, none so close to the day's end
 * that the label would run into the next day, and none at all when no day would get more than one (its opening says nothing new).
 */
export function hourTicks(s: AxisScale, tz: string, closures: Closure[], minGap = 44): HourTick[] {
  const perMin = pxPerMs(s) * 60_000
  const step = STEPS_MIN.find((m) => m * perMin >= minGap)
  if (!step) return []
  const out: HourTick[] = []
  for (const d of daysOf(s, tz)) {
    if (closureOn(closures, d.day)) continue
    const midnight = dayStart(d.day, tz).getTime()
    const first = foldAt(s, midnight)?.end ?? midnight
    const endX = xAt(s, d.to)
    const dayEnd = dayStart(nextDay(d.day), tz).getTime()
    for (let t = first; t < dayEnd; t += step * 60_000) {
      // A range opened at a day's first moment may start a millisecond after it (the timeline steps off a fold's edge).
      if (t < d.from - 60_000 || t >= d.to || foldAt(s, t)) continue
      const x = xAt(s, t)
      if (endX - x < minGap * 0.8) continue
      out.push({ day: d.day, at: t, x: Math.max(0, x), label: dayjs(t).tz(tz).format('HH:mm') })
    }
  }
  const perDay = new Map<string, number>()
  for (const t of out) perDay.set(t.day, (perDay.get(t.day) ?? 0) + 1)
  return [...perDay.values()].some((n) => n > 1) ? out : []
}
