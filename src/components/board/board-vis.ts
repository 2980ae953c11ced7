// Pure mapping from board data to timeline rows and bars: groups, bar colours by kind or state, backgrounds, windows, move requests.
import dayjs from 'dayjs'
import type { MoveInput } from '@shared/schemas/plan'
import type { BoardData, BoardItem, JobState } from '@shared/schemas/board'
import type { PlanMove } from '@shared/schemas/plan'
import { dayStart, parseInstant, workedSpans, workWhileShut, type ColourBy, type RowsBy, type Span } from '@/lib/board-calendar'

// The calendar arithmetic lives in src/lib so stores can use it without importing a component module.
export {
  dataWindowFor,
  dayStart,
  localDay,
  parseInstant,
  shiftAnchor,
  visibleWindow,
  weekMonday,
  workedSpans,
  type ColourBy,
  type RowsBy,
  type Zoom,
} from '@/lib/board-calendar'

export type BarState = 'planned' | 'claimed' | 'running' | 'paused' | 'late' | 'done'

export const OUTSIDE_GROUP = 'outside'
export const UNASSIGNED_GROUP = 'unassigned'

/** Our own palette for "colour by state": calm greys and blues for the plan, warm for work in hand, oxide red for late. */
export const STATE_COLOURS: Record<BarState, { bg: string; label: string }> = {
  planned: { bg: '#7d8794', label: 'Planned' },
  claimed: { bg: '#3f7f8c', label: 'Claimed' },
  running: { bg: '#4d7a5a', label: 'Running' },
  paused: { bg: '#b58a2f', label: 'Paused' },
  late: { bg: '#a8473a', label: 'Ends after the due date' },
  done: { bg: '#a39a8f', label: 'Finished' },
}

export interface TimelineGroup {
  id: string
  content: string
  /** A second line under the row name (the bench's kind). */
  sub?: string
  className?: string
  order: number
  /** Bars sit in lanes of their own (see `assignLanes`), one above the other in lane order. */
  subgroupOrder?: 'lane'
}

export interface TimelineBar {
  id: number
  group: string
  start: Date
  end: Date
  content: string
  className: string
  style: string
  type: 'range'
  editable: { updateTime: boolean; updateGroup: boolean; remove: false }
  bar: BoardItem
  /** The bar's lane within its row (vis-timeline's subgroup `lane-N`), from the stretches it is worked (`assignLanes`). */
  subgroup?: string
  lane?: number
  /** Bench work that pauses: where its worked pieces lie across the bar, in per cent of the bar's drawn width. */
  pieces?: BarPiece[]
  /** A bar drawn as pieces keeps its label where it starts and its full width (the pieces are placed across that width). */
  align?: 'left'
  limitSize?: false
}

/** One worked piece of a bar, in per cent of the bar's drawn width from its left end. */
export interface BarPiece {
  left: number
  width: number
}

export interface TimelineBackground {
  id: string
  group?: string
  start: Date
  end: Date
  content: string
  className: string
  type: 'background'
  editable: false
  selectable: false
}

/** Whether a visible range reaches beyond the loaded data window. */
export function outsideWindow(range: { start: Date; end: Date }, window: { from: string; to: string }, tz: string): boolean {
  const from = dayStart(window.from, tz).getTime()
  const to = dayStart(dayjs(window.to).add(1, 'day').format('YYYY-MM-DD'), tz).getTime()
  return range.start.getTime() < from || range.end.getTime() > to
}

export function groupOf(item: Pick<BoardItem, 'outside' | 'benchId' | 'personId'>, rowsBy: RowsBy): string {
  if (item.outside) return OUTSIDE_GROUP
  const id = rowsBy === 'bench' ? item.benchId : item.personId
  return id === null ? UNASSIGNED_GROUP : `${rowsBy === 'bench' ? 'b' : 'p'}:${id}`
}

/** Rows: every bench (or person), then outside work and anything without a row, when there is some. */
export function groupsFor(data: Pick<BoardData, 'benches' | 'people' | 'items'>, rowsBy: RowsBy): TimelineGroup[] {
  const rows: TimelineGroup[] =
    rowsBy === 'bench'
      ? data.benches.map((b, i) => ({ id: `b:${b.id}`, content: b.name, sub: b.kind, order: i }))
      : data.people.map((p, i) => ({ id: `p:${p.id}`, content: p.name, order: i }))
  for (const r of rows) r.subgroupOrder = 'lane'
  const used = new Set(data.items.map((i) => groupOf(i, rowsBy)))
  if (used.has(UNASSIGNED_GROUP))
    rows.push({
      id: UNASSIGNED_GROUP,
      content: rowsBy === 'bench' ? 'No bench yet' : 'No one yet',
      className: 'board-row--muted',
      order: 998,
      subgroupOrder: 'lane',
    })
  // Outside work (casting, hallmarking) takes days away from the workshop: its own row, always last.
  rows.push({
    id: OUTSIDE_GROUP,
    content: 'Outside work',
    sub: 'away from the workshop',
    className: 'board-row--outside',
    order: 999,
    subgroupOrder: 'lane',
  })
  return rows
}

export function barState(item: Pick<BoardItem, 'status' | 'late'>): BarState {
  if (item.status === 'done') return 'done'
  if (item.status === 'running') return 'running'
  if (item.status === 'paused') return 'paused'
  if (item.late) return 'late'
  if (item.status === 'claimed') return 'claimed'
  return 'planned'
}

/** Relative luminance (WCAG 2.x definition) of a #rrggbb colour. */
export function luminance(hex: string): number {
  const m = /^#?([0-9a-f]{6})$/i.exec(hex.trim())
  if (!m) return 0.2
  const n = parseInt(m[1]!, 16)
  const ch = [(n >> 16) & 255, (n >> 8) & 255, n & 255].map((v) => {
    const c = v / 255
    return c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4
  })
  return 0.2126 * ch[0]! + 0.7152 * ch[1]! + 0.0722 * ch[2]!
}

/** WCAG contrast ratio between two colours. */
export function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x) as [number, number]
  return (hi + 0.05) / (lo + 0.05)
}

/** Twelve muted tones; every piece of one order shares its order's tone, neighbouring order numbers differ. */
export const ORDER_TONES = ['#8c5a3c', '#4f6d8a', '#7a8a3e', '#9a4f6b', '#3f7f78', '#a0782c', '#5d5a9a', '#b0613f', '#527a4f', '#7d4f8c', '#3e6f9c', '#8a6b4f']
export const orderTone = (orderId: number) => ORDER_TONES[(((orderId * 7) % ORDER_TONES.length) + ORDER_TONES.length) % ORDER_TONES.length]!

/** White or dark ink, whichever reads better on the bar. */
export function inkOn(bg: string): string {
  return contrast(bg, '#ffffff') >= contrast(bg, '#2a2521') ? '#ffffff' : '#2a2521'
}

export interface BarOptions {
  rowsBy: RowsBy
  colourBy: ColourBy
  /** The manager may drag on the live plan. */
  canEdit: boolean
  /** What a draft moves against the live plan (shown when viewing a draft). */
  moved?: Map<number, PlanMove['change']>
  /** Job risk by job bag, to outline the bars of jobs at risk. */
  jobStates?: Map<number, JobState>
  /** A job bag found by the search: its bars stand out, the rest dim. */
  foundJobBagId?: number | null
  /** Stretches folded away ("working hours only"): a bar drawn as pieces places them on the folded scale. */
  folded?: { start: Date; end: Date }[] | null
}

/** A bar may be dragged by the manager on the live plan unless it is being worked on or finished. */
export function isDraggable(item: Pick<BoardItem, 'status'>, canEdit: boolean): boolean {
  return canEdit && !['running', 'done', 'skipped'].includes(item.status)
}

export function barFor(item: BoardItem, o: BarOptions): TimelineBar {
  const state = barState(item)
  const bg = o.colourBy === 'kind' ? item.color : o.colourBy === 'order' ? orderTone(item.orderId) : STATE_COLOURS[state].bg
  const classes = ['board-bar', `board-bar--${state}`]
  // Every bar of a piece that finishes late; the bar(s) that end after the due date are marked as well.
  if (item.lateJob || item.late) {
    classes.push('board-bar--late-job')
    if (item.late) classes.push('board-bar--past-due')
  } else if (o.jobStates?.get(item.jobBagId) === 'at-risk') classes.push('board-bar--at-risk')
  if (item.broken) classes.push('board-bar--broken')
  if (item.pinned) classes.push('board-bar--pinned')
  if (item.outside) classes.push('board-bar--outside')
  if (item.hazards.length) classes.push('board-bar--hazard')
  const change = o.moved?.get(item.id)
  if (change) classes.push('board-bar--moved', `board-bar--moved-${change.includes('new') ? 'new' : 'shift'}`)
  const drag = isDraggable(item, o.canEdit)
  if (!drag) classes.push('board-bar--fixed')
  if (item.actual) classes.push('board-bar--actual')
  if (o.foundJobBagId != null) classes.push(item.jobBagId === o.foundJobBagId ? 'board-bar--found' : 'board-bar--dimmed')
  const pieces = barPieces(item, o.folded ?? null)
  if (pieces) classes.push('board-bar--split')
  return {
    id: item.id,
    group: groupOf(item, o.rowsBy),
    start: parseInstant(item.start),
    end: parseInstant(item.end),
    content: `${item.jobBagNumber} ${item.name}`,
    className: classes.join(' '),
    // A bar drawn as pieces paints only its pieces (in --bar-bg); the time between them stays hollow.
    style: pieces ? `--bar-bg: ${bg}; color: ${inkOn(bg)};` : `background-color: ${bg}; color: ${inkOn(bg)};`,
    type: 'range',
    editable: { updateTime: drag, updateGroup: drag && !item.outside, remove: false },
    bar: item,
    ...(pieces ? { pieces, align: 'left' as const, limitSize: false as const } : {}),
  }
}

/** Milliseconds of [a, b) the timeline shows: the folded stretches within it taken out. */
function shownMs(a: number, b: number, folded: Span[]): number {
  let t = b - a
  for (const f of folded) t -= Math.max(0, Math.min(b, f.end) - Math.max(a, f.start))
  return t
}

/**
 * Where a bar's worked pieces lie across it, in per cent of its drawn width (folded stretches take no width); null for a bar
 * worked in one stretch.
 */
export function barPieces(item: Pick<BoardItem, 'start' | 'end' | 'segments'>, folded: { start: Date; end: Date }[] | null): BarPiece[] | null {
  if (!item.segments || item.segments.length < 2) return null
  const s = parseInstant(item.start).getTime(),
    e = parseInstant(item.end).getTime()
  const folds = (folded ?? []).map((f) => ({ start: f.start.getTime(), end: f.end.getTime() }))
  const total = shownMs(s, e, folds)
  if (total <= 0) return null
  const pct = (ms: number) => Math.round((ms / total) * 100_000) / 1000
  const out: BarPiece[] = []
  for (const p of item.segments) {
    const a = Math.max(s, parseInstant(p.start).getTime()),
      b = Math.min(e, parseInstant(p.end).getTime())
    if (b > a) out.push({ left: pct(shownMs(s, a, folds)), width: pct(shownMs(a, b, folds)) })
  }
  return out.length > 1 ? out : null
}

/**
 * Lanes within each row, from the stretches bars are really worked (not start to end): taken in order of start, a bar goes in
 * the first lane where none of its worked pieces meets another bar's. So a step that pauses overnight leaves its lane free
 * for the work done in its pause, and bars that only touch share a lane. Sets each bar's `lane` and `subgroup`.
 */
export function assignLanes<T extends Pick<TimelineBar, 'id' | 'group' | 'bar'> & { lane?: number; subgroup?: string }>(bars: T[]): T[] {
  const rows = new Map<string, { bar: T; spans: Span[]; start: number }[]>()
  for (const bar of bars) {
    const spans = workedSpans(bar.bar)
    const list = rows.get(bar.group) ?? []
    list.push({ bar, spans, start: spans.reduce((m, x) => Math.min(m, x.start), Infinity) })
    rows.set(bar.group, list)
  }
  for (const list of rows.values()) {
    list.sort((a, b) => a.start - b.start || a.bar.id - b.bar.id)
    // Each lane's pieces still to be met (those ending at or before a bar's start can no longer meet a later bar).
    const lanes: Span[][] = []
    for (const { bar, spans, start } of list) {
      let lane = -1
      for (let i = 0; i < lanes.length; i++) {
        const taken = (lanes[i] = lanes[i]!.filter((p) => p.end > start))
        if (!taken.some((p) => spans.some((q) => q.start < p.end && p.start < q.end))) {
          lane = i
          break
        }
      }
      if (lane < 0) lane = lanes.push([]) - 1
      lanes[lane]!.push(...spans)
      bar.lane = lane
      bar.subgroup = `lane-${lane}`
    }
  }
  return bars
}

/** Shading: closed hours across all rows, closures named, leave on the person's row, downtime on the bench's row. */
export function backgroundsFor(data: Pick<BoardData, 'nonWorking' | 'closures' | 'leave' | 'downtime' | 'window'>, rowsBy: RowsBy): TimelineBackground[] {
  const tz = data.window.timeZone
  const bg = (id: string, start: Date, end: Date, className: string, content = '', group?: string): TimelineBackground => ({
    id,
    start,
    end,
    className,
    content,
    type: 'background',
    editable: false,
    selectable: false,
    ...(group ? { group } : {}),
  })
  const nextDay = (d: string) => dayjs(d).add(1, 'day').format('YYYY-MM-DD')
  const out: TimelineBackground[] = data.nonWorking.map((x, i) => bg(`off:${i}`, parseInstant(x.start), parseInstant(x.end), 'board-bg-off'))
  data.closures.forEach((c, i) => out.push(bg(`closure:${i}`, dayStart(c.startsOn, tz), dayStart(nextDay(c.endsOn), tz), 'board-bg-closure', c.name)))
  if (rowsBy === 'person')
    data.leave.forEach((l, i) =>
      out.push(bg(`leave:${i}`, dayStart(l.startsOn, tz), dayStart(nextDay(l.endsOn), tz), 'board-bg-leave', l.reason || 'Leave', `p:${l.personId}`)),
    )
  if (rowsBy === 'bench')
    data.downtime.forEach((d, i) =>
      out.push(bg(`down:${i}`, parseInstant(d.startsAt), parseInstant(d.endsAt), 'board-bg-down', d.reason || 'Downtime', `b:${d.benchId}`)),
    )
  return out
}

/**
 * The part of a closed day that "working hours only" keeps on the board, narrow, so the day shows as closed instead of vanishing:
 * from 09:00, three hours unless the board needs more for the day's date to fit (`closedDayHours`).
 */
export const CLOSED_DAY_SHOWN = { from: '09:00', hours: 3 }

/** The narrowest a closed day is drawn: room for its date (two figures) in the axis's small type, with the hatching either side. */
export const CLOSED_DAY_MIN_PX = 18

const HOUR = 3_600_000
const QUARTER_HOUR = HOUR / 4

/** A stretch widened to whole hours of the workshop's clock (09:10–12:40 → 09:00–13:00), so work kept on the board has room. */
function toWholeHours(p: Span, tz: string): Span {
  const s = dayjs(p.start).tz(tz).startOf('hour').valueOf()
  const e = dayjs(p.end).tz(tz)
  return { start: s, end: e.startOf('hour').valueOf() === p.end ? p.end : e.startOf('hour').add(1, 'hour').valueOf() }
}

/** What "working hours only" works from: the board's shut stretches, its closures and the work done or planned while shut. */
type FoldData = Pick<BoardData, 'nonWorking'> & Partial<Pick<BoardData, 'closures' | 'window' | 'shutWork' | 'items'>>

/**
 * The stretch of a closed day kept on the board: `hours` from CLOSED_DAY_SHOWN's 09:00, or, when that would run past midnight,
 * the day's last `hours` (at most the whole day).
 */
function closedDayKept(day: string, tz: string, hours: number): Span {
  const from = dayjs.tz(`${day} ${CLOSED_DAY_SHOWN.from}`, tz).valueOf()
  const midnight = dayStart(dayjs(day).add(1, 'day').format('YYYY-MM-DD'), tz).getTime()
  const end = Math.min(midnight, from + hours * HOUR)
  return { start: Math.max(dayStart(day, tz).getTime(), end - hours * HOUR), end }
}

/** The days of the closures, each once. */
function closedDays(closures: readonly { startsOn: string; endsOn: string }[]): string[] {
  const out = new Set<string>()
  for (const c of closures) for (let d = dayjs(c.startsOn); !d.isAfter(dayjs(c.endsOn)); d = d.add(1, 'day')) out.add(d.format('YYYY-MM-DD'))
  return [...out]
}

/**
 * Long closed stretches (nights, weekends, closures) that "working hours only" folds away; short breaks stay shaded. A closed day
 * (a closure) keeps `closedHours` (CLOSED_DAY_SHOWN's three by default) unfolded, where its shading and heading say it is closed;
 * work while the workshop is shut (a Saturday someone works, by their own hours, a time record or a bar planned there) keeps its
 * hours, widened to whole hours, so that day shows with its heading like an open one.
 */
export function foldedStretches(data: FoldData, minHours = 4, closedHours: number = CLOSED_DAY_SHOWN.hours): { start: Date; end: Date }[] {
  const tz = data.window?.timeZone
  const shut = data.nonWorking.map((x) => ({ start: parseInstant(x.start).getTime(), end: parseInstant(x.end).getTime() }))
  const kept: Span[] = []
  if (tz && closedHours > 0) for (const day of closedDays(data.closures ?? [])) kept.push(closedDayKept(day, tz, closedHours))
  if (tz) kept.push(...workWhileShut(data, tz).map((p) => toWholeHours(p, tz)))
  const out: { start: Date; end: Date }[] = []
  for (const x of shut) {
    // Cut the kept parts out of the stretch; what is left folds when it is long enough.
    let pieces = [x]
    for (const k of kept)
      pieces = pieces.flatMap((p) =>
        k.end <= p.start || k.start >= p.end
          ? [p]
          : [
              { start: p.start, end: k.start },
              { start: k.end, end: p.end },
            ].filter((q) => q.end > q.start),
      )
    for (const p of pieces) if (p.end - p.start >= minHours * HOUR) out.push({ start: new Date(p.start), end: new Date(p.end) })
  }
  return out
}

/**
 * How many hours a closed day keeps on the board so that, across `range` drawn `width` pixels wide, each closed day in it is at
 * least `minPx` wide (CLOSED_DAY_MIN_PX: room for its date): CLOSED_DAY_SHOWN's three hours when they are enough, else more, to
 * the quarter hour. In four weeks the open hours share the width with the closed days, so the more hours are open (a workshop
 * that works Saturdays) or the narrower the screen, the more a closed day keeps. With n closed days of k hours each and S of
 * other shown time, a closed day is k × width ÷ (S + n × k) pixels, so k ≥ minPx × S ÷ (width − n × minPx); closed days
 * that leave no room for the rest (n × minPx ≥ width) keep the whole day.
 */
export function closedDayHours(data: FoldData, range: { start: Date; end: Date }, width: number, minPx = CLOSED_DAY_MIN_PX): number {
  const tz = data.window?.timeZone
  const base = CLOSED_DAY_SHOWN.hours
  if (!tz || width <= 0) return base
  const a = range.start.getTime(),
    b = range.end.getTime()
  // The closed days whose kept hours lie in the range.
  const n = closedDays(data.closures ?? []).filter((day) => {
    const k = closedDayKept(day, tz, base)
    return k.start < b && k.end > a
  }).length
  if (!n) return base
  // The time shown besides them: the range less what folds when closed days keep nothing.
  const others = shownMs(
    a,
    b,
    foldedStretches(data, 4, 0).map((f) => ({ start: f.start.getTime(), end: f.end.getTime() })),
  )
  if (others <= 0) return base
  if (n * minPx >= width) return 24
  const need = (minPx * others) / (width - n * minPx)
  return Math.min(24, Math.max(base, Math.ceil(need / QUARTER_HOUR) / 4))
}

/** Whether any of a day is shown: not wholly inside one folded stretch (or no stretches folded: the whole clock). */
export function dayShown(day: string, tz: string, folded: { start: Date; end: Date }[] | null): boolean {
  const from = dayStart(day, tz).getTime()
  const to = dayStart(dayjs(day).add(1, 'day').format('YYYY-MM-DD'), tz).getTime()
  return !(folded ?? []).some((f) => f.start.getTime() <= from && f.end.getTime() >= to)
}

export interface DropTarget {
  group: string | number | null | undefined
  start: Date
}

/** The PATCH body for a bar dropped on a row and time; null when nothing changed. */
export function moveRequest(item: BoardItem, to: DropTarget, rowsBy: RowsBy): MoveInput | null {
  const body: MoveInput = { version: item.version }
  const group = String(to.group ?? '')
  if (group && group !== groupOf(item, rowsBy)) {
    const id = /^[bp]:(\d+)$/.exec(group)?.[1]
    const value = group === OUTSIDE_GROUP || group === UNASSIGNED_GROUP || !id ? null : Number(id)
    if (rowsBy === 'bench') body.benchId = value
    else body.personId = value
  }
  if (Math.abs(to.start.getTime() - parseInstant(item.start).getTime()) >= 60_000) body.start = to.start.toISOString()
  return Object.keys(body).length > 1 ? body : null
}

/**
 * What a draft moves, in parts that never overlap, so they add up to the number of bars that change: those going to another
 * bench or person (whether or not their time changes too; split into bench only, person only and both when more than one of
 * these happens), those changing only in time, those newly planned and those no longer planned. "none" when nothing changes.
 */
export function movesBreakdown(moves: Pick<PlanMove, 'change'>[]): string {
  let bench = 0,
    person = 0,
    both = 0,
    time = 0,
    added = 0,
    dropped = 0
  for (const { change } of moves) {
    if (change.includes('new')) added++
    else if (change.includes('dropped')) dropped++
    else if (change.includes('bench') && change.includes('person')) both++
    else if (change.includes('bench')) bench++
    else if (change.includes('person')) person++
    else if (change.includes('time')) time++
  }
  const kinds = [bench && `${bench} another bench`, person && `${person} another person`, both && `${both} both`].filter(Boolean)
  const elsewhere = bench + person + both
  const parts = [
    kinds.length > 1
      ? `${elsewhere} to another bench or person (${kinds.join(', ')})`
      : bench
        ? `${bench} to another bench`
        : person
          ? `${person} to another person`
          : both && `${both} to another bench and person`,
    time && `${time} only in time`,
    added && `${added} newly planned`,
    dropped && `${dropped} no longer planned`,
  ].filter(Boolean)
  return parts.length ? parts.join(', ') : 'none'
}

/** "1 bar changes" / "3 bars change". */
export const barsChange = (n: number) => (n === 1 ? '1 bar changes' : `${n} bars change`)

/** A step's estimate as people say it: bench work in hours and minutes, outside work in the working days it is away. */
export function estimateLabel(item: Pick<BoardItem, 'outside' | 'outsideDays' | 'estimateMinutes'>): string {
  const days = item.outsideDays
  if (item.outside && days) return `${days} working day${days === 1 ? '' : 's'} away (outside work)`
  return `${formatMinutes(item.estimateMinutes)}${item.outside ? ' (outside work)' : ''}`
}

/**
 * Why a bar is shorter or longer than its estimate: "Priya works it in 1 h 22 min (speed 1.1)" — the planner gives a person
 * estimate ÷ speed, rounded up to the minute (server/planning/problem.ts). Empty at the standard speed, for outside work, or
 * without a planned person.
 */
export function speedNote(item: Pick<BoardItem, 'outside' | 'estimateMinutes' | 'speed'>, person: string | null): string {
  if (item.outside || !person || item.speed === undefined || item.speed === 1) return ''
  const speed = Math.round(item.speed * 100) / 100
  return `${person} works it in ${formatMinutes(Math.ceil(item.estimateMinutes / item.speed))} (speed ${speed})`
}

/** Minutes as "1 h 35 min" / "20 min" / "3 d" (working minutes of an estimate). */
export function formatMinutes(min: number): string {
  if (min < 60) return `${Math.round(min)} min`
  const h = Math.floor(min / 60)
  const m = Math.round(min % 60)
  return m ? `${h} h ${m} min` : `${h} h`
}

/** The engine's completion (minutes from the Monday 00:00 of the current ISO week, workshop time) as an instant. */
export function completionFromMakespan(makespanMinutes: number, now: Date | string, tz: string): Date {
  const monday = dayjs(now)
    .tz(tz)
    .startOf('day')
    .subtract(dayjs(now).tz(tz).isoWeekday() - 1, 'day')
    .format('YYYY-MM-DD')
  return new Date(dayStart(monday, tz).getTime() + makespanMinutes * 60_000)
}

/** Weighted lateness in hours, one decimal. */
export const lateHours = (weightedTardinessMinutes: number) => Math.round((weightedTardinessMinutes / 60) * 10) / 10

/** An instant on the workshop's clock: "Thu 3 Dec 15:48". */
export function formatWhen(at: string | Date | null | undefined, tz: string): string {
  return at
    ? dayjs(typeof at === 'string' ? parseInstant(at) : at)
        .tz(tz)
        .format('ddd D MMM HH:mm')
    : '—'
}

/** A stretch on the workshop's clock: "Thu 3 Dec 15:48–16:02", or with both days when it spans more than one. */
export function formatSpan(start: string, end: string, tz: string): string {
  const a = dayjs(parseInstant(start)).tz(tz)
  const b = dayjs(parseInstant(end)).tz(tz)
  return a.format('YYYY-MM-DD') === b.format('YYYY-MM-DD')
    ? `${a.format('ddd D MMM HH:mm')}–${b.format('HH:mm')}`
    : `${a.format('ddd D MMM HH:mm')} – ${b.format('ddd D MMM HH:mm')}`
}

/*
 * Outside work (casting, hallmarking) is counted in whole workshop days, 00:00 to 00:00 (outsideWorkEnd in
 * server/scheduler/calendar.ts): it leaves when ready, or at a day's first minute when it waited for the workshop to open, and
 * comes back at the close of its last day, which is the next midnight. Neither midnight is a time anyone works, so they are
 * worded as the day's opening and the day's end, never 00:00 (as formatPlannedStart and the server's reasons word them).
 */
const isMidnight = (at: string, tz: string) => dayjs(parseInstant(at)).tz(tz).format('HH:mm') === '00:00'
const dayOf = (at: string | number | Date, tz: string) =>
  dayjs(typeof at === 'string' ? parseInstant(at) : at)
    .tz(tz)
    .format('ddd D MMM')

/** When outside work goes out: "Tue 3 Mar 14:35" (the moment it was ready), or "at opening on Tue 3 Mar"; with `since`, "since …". */
function outWhen(at: string, tz: string, since = false): string {
  if (isMidnight(at, tz)) return `${since ? 'since' : 'at'} opening on ${dayOf(at, tz)}`
  return `${since ? 'since ' : ''}${formatWhen(at, tz)}`
}

/** When outside work is back: midnight is the end of the day before ("by the end of Thu 5 Mar" planned, "at the end of …" as booked). */
function backWhen(at: string, tz: string, planned: boolean): string {
  if (isMidnight(at, tz)) return `${planned ? 'by' : 'at'} the end of ${dayOf(parseInstant(at).getTime() - 60_000, tz)}`
  return `${planned ? 'by ' : ''}${formatWhen(at, tz)}`
}

/**
 * A bar's planned stretch: bench work as formatSpan ("Thu 3 Dec 15:48–16:02"); outside work as the day it goes out and the day
 * it is back: "out Tue 3 Mar 14:35, back by the end of Thu 5 Mar", "out at opening on Tue 3 Mar, back by the end of Tue 3 Mar".
 */
export function plannedSpan(item: Pick<BoardItem, 'outside'>, start: string, end: string, tz: string): string {
  return item.outside ? `out ${outWhen(start, tz)}, back ${backWhen(end, tz, true)}` : formatSpan(start, end, tz)
}

/** A paused step's worked stretches: "Mon 7 Dec 12:08–12:30, Tue 8 Dec 08:30–09:42"; null for work in one stretch. */
export function workedStretches(item: Pick<BoardItem, 'segments'>, tz: string): string | null {
  return item.segments && item.segments.length > 1 ? item.segments.map((p) => formatSpan(p.start, p.end, tz)).join(', ') : null
}

/** Whole minutes as "3 h 10 min" (rounded to the minute). */
const wholeMinutes = (min: number) => formatMinutes(Math.round(min))

/**
 * Plan against what happened, in one line: "Finished Wed 2 Dec 12:20 · worked 2 h 50 min against 2 h 30 min estimated",
 * "Running since Wed 2 Dec 09:10 · worked 1 h 20 min so far of 2 h 30 min estimated"; null for work not started.
 * Worked minutes are the sum of the time records (breaks between them not counted).
 */
export function actualSummary(item: Pick<BoardItem, 'status' | 'actual' | 'estimateMinutes' | 'outside'>, tz: string): string | null {
  const a = item.actual
  if (!a) return null
  if (!a.fromRecords) return a.end ? `Back ${backWhen(a.end, tz, false)} · sent out ${outWhen(a.start, tz)}` : `Sent out ${outWhen(a.start, tz)}`
  const against = item.estimateMinutes > 0 ? ` against ${wholeMinutes(item.estimateMinutes)} estimated` : ''
  if (a.end) return `Finished ${formatWhen(a.end, tz)} · worked ${wholeMinutes(a.workedMinutes)}${against}`
  return `Running since ${formatWhen(a.start, tz)} · worked ${wholeMinutes(a.workedMinutes)} so far${item.estimateMinutes > 0 ? ` of ${wholeMinutes(item.estimateMinutes)} estimated` : ''}`
}

/**
 * The actual stretch as "Wed 2 Dec 09:10–12:20", or "since Wed 2 Dec 09:10" while running; outside work as "out Tue 3 Mar
 * 10:12, back Thu 5 Mar 15:20", or "out since Tue 3 Mar 10:12" while it is away.
 */
export function actualSpan(item: Pick<BoardItem, 'actual' | 'outside'>, tz: string): string | null {
  const a = item.actual
  if (!a) return null
  if (item.outside) return a.end ? `out ${outWhen(a.start, tz)}, back ${backWhen(a.end, tz, false)}` : `out ${outWhen(a.start, tz, true)}`
  return a.end ? formatSpan(a.start, a.end, tz) : `since ${formatWhen(a.start, tz)}`
}

/** Minutes between two instants, e.g. a planned span's clock length. */
export const minutesBetween = (a: string, b: string) => Math.round((parseInstant(b).getTime() - parseInstant(a).getTime()) / 60_000)

export interface JobBagHit {
  jobBagId: number
  number: string
  piece: string
  customerName: string
  orderNumber: string
  /** Bars of the job bag in the loaded weeks. */
  bars: number
}

/** Job bags on the board (bars or jobs list) whose number, order number or customer's name holds the words typed. */
export function searchJobBags(data: Pick<BoardData, 'items' | 'jobs'>, query: string): JobBagHit[] {
  const words = query.trim().toLowerCase().split(/\s+/).filter(Boolean)
  if (!words.length) return []
  const bags = new Map<number, JobBagHit>()
  for (const i of data.items) {
    const b = bags.get(i.jobBagId) ?? {
      jobBagId: i.jobBagId,
      number: i.jobBagNumber,
      piece: i.piece,
      customerName: i.customerName,
      orderNumber: i.orderNumber,
      bars: 0,
    }
    b.bars++
    bags.set(i.jobBagId, b)
  }
  for (const j of data.jobs)
    if (!bags.has(j.jobBagId))
      bags.set(j.jobBagId, { jobBagId: j.jobBagId, number: j.number, piece: j.piece, customerName: j.customerName, orderNumber: j.orderNumber, bars: 0 })
  const hay = (b: JobBagHit) => `${b.number} ${b.orderNumber} ${b.customerName}`.toLowerCase()
  return (
    [...bags.values()]
      .filter((b) => words.every((w) => hay(b).includes(w)))
      // Number matches first, then by number.
      .sort(
        (a, b) => Number(!a.number.toLowerCase().includes(words[0]!)) - Number(!b.number.toLowerCase().includes(words[0]!)) || a.number.localeCompare(b.number),
      )
  )
}

/** Keyboard steps for a selected bar: arrows move it by this many minutes, with Shift by the larger step. */
export const KEY_STEP_MINUTES = 15
export const KEY_SHIFT_STEP_MINUTES = 60

export type KeyMove = { body: MoveInput; what: string } | { refused: string } | null

/**
 * The move a key asks for on the selected bar: ←/→ earlier/later by 15 min (Shift: an hour), ↑/↓ to the previous/next
 * row that can take the step (a bench equipped for its kind, or a person skilled for it at its level). Null: not a moving key.
 */
export function keyMove(item: BoardItem, key: string, shift: boolean, data: Pick<BoardData, 'benches' | 'people'>, rowsBy: RowsBy): KeyMove {
  if (!['ArrowLeft', 'ArrowRight', 'ArrowUp', 'ArrowDown'].includes(key)) return null
  if (item.status === 'done') return { refused: `“${item.name}” is finished; finished work stays where it happened.` }
  if (!isDraggable(item, true))
    return {
      refused: item.outside ? `“${item.name}” has been sent out; it cannot be moved.` : `“${item.name}” is being worked on at the bench; it cannot be moved.`,
    }
  if (key === 'ArrowLeft' || key === 'ArrowRight') {
    const step = (shift ? KEY_SHIFT_STEP_MINUTES : KEY_STEP_MINUTES) * (key === 'ArrowLeft' ? -1 : 1)
    const start = new Date(parseInstant(item.start).getTime() + step * 60_000)
    return { body: { start: start.toISOString(), version: item.version }, what: `${formatMinutes(Math.abs(step))} ${step < 0 ? 'earlier' : 'later'}` }
  }
  if (item.outside) return { refused: `“${item.name}” is outside work; it has no bench or person row.` }
  const dir = key === 'ArrowUp' ? -1 : 1
  const rows =
    rowsBy === 'bench'
      ? data.benches.map((b) => ({ id: b.id, name: b.name, fits: b.kinds.includes(item.kind) }))
      : data.people.map((p) => ({ id: p.id, name: p.name, fits: (p.skills[item.kind] ?? 0) >= item.requiredLevel }))
  const current = rowsBy === 'bench' ? item.benchId : item.personId
  const at = rows.findIndex((r) => r.id === current)
  for (let i = at + dir; i >= 0 && i < rows.length; i += dir) {
    const r = rows[i]!
    if (!r.fits || r.id === current) continue
    return { body: { ...(rowsBy === 'bench' ? { benchId: r.id } : { personId: r.id }), version: item.version }, what: `to ${r.name}` }
  }
  const where = rowsBy === 'bench' ? 'bench equipped for' : 'person skilled for'
  return { refused: `No ${key === 'ArrowUp' ? 'earlier' : 'later'} row has a ${where} ${item.kindName.toLowerCase()}.` }
}
