// Board mapping: rows, bars and their colours, shading, windows in the workshop's zone, and the move request a drop makes.
import { describe, expect, it } from 'vitest'
import type { BoardData, BoardItem } from '@shared/schemas/board'
import {
  ORDER_TONES,
  OUTSIDE_GROUP,
  STATE_COLOURS,
  backgroundsFor,
  orderTone,
  barFor,
  barState,
  completionFromMakespan,
  contrast,
  dataWindowFor,
  dayStart,
  foldedStretches,
  groupOf,
  groupsFor,
  inkOn,
  isDraggable,
  moveRequest,
  outsideWindow,
  parseInstant,
  shiftAnchor,
  visibleWindow,
} from '@/components/board/board-vis'

const makeItem = (o: Partial<BoardItem> = {}): BoardItem => ({
  id: 1,
  jobBagId: 10,
  jobBagNumber: 'MG26-0001-1',
  piece: 'Test ring',
  orderId: 5,
  orderNumber: 'MG26-0001',
  customerName: 'Bea Tamsworth',
  name: 'Set stones',
  kind: 'setting',
  kindName: 'Stone setting',
  color: '#4f5fa8',
  hazards: [],
  outside: false,
  status: 'ready',
  benchId: 5,
  personId: 1,
  start: '2026-12-03T09:00:00.000Z',
  end: '2026-12-03T10:00:00.000Z',
  pinned: false,
  version: 3,
  estimateMinutes: 60,
  requiredLevel: 1,
  reason: null,
  late: false,
  lateJob: false,
  planned: null,
  actual: null,
  ...o,
})
const data = (items: BoardItem[] = [makeItem()]): Pick<BoardData, 'benches' | 'people' | 'items'> => ({
  benches: [
    { id: 5, name: 'Setting bench A', kind: 'setting', kinds: ['setting'] },
    { id: 7, name: 'Polishing station', kind: 'polishing', kinds: ['polishing'] },
  ],
  people: [
    { id: 1, name: 'Ines Harrowby', skills: { setting: 3 } },
    { id: 5, name: 'Ruth Calder', skills: { polishing: 2 } },
  ],
  items,
})
const opts = { rowsBy: 'bench' as const, colourBy: 'kind' as const, canEdit: true }

describe('rows', () => {
  it('when rows are by bench, then every bench is a row and outside work has its own last row', () => {
    const g = groupsFor(data(), 'bench')
    expect(g.map((x) => x.id)).toEqual(['b:5', 'b:7', OUTSIDE_GROUP])
    expect(g.at(-1)!.order).toBeGreaterThan(g[0]!.order)
  })
  it('when a bar has no person yet, then the person view adds a row for it', () => {
    const g = groupsFor(data([makeItem({ personId: null })]), 'person')
    expect(g.map((x) => x.id)).toEqual(['p:1', 'p:5', 'unassigned', OUTSIDE_GROUP])
  })
  it('when an operation is outside work, then it sits on the outside row whatever the view', () => {
    expect(groupOf(makeItem({ outside: true, benchId: null, personId: null }), 'bench')).toBe(OUTSIDE_GROUP)
    expect(groupOf(makeItem(), 'person')).toBe('p:1')
  })
})

describe('bars', () => {
  it('when coloured by kind, then the bar takes the kind colour and readable ink', () => {
    const b = barFor(makeItem(), opts)
    expect(b.style).toContain('background-color: #4f5fa8')
    expect(b.style).toContain('color: #ffffff')
    expect(b.group).toBe('b:5')
    expect(b.start.toISOString()).toBe('2026-12-03T09:00:00.000Z')
  })
  it('when coloured by state, then running, paused, claimed and late use the state palette', () => {
    expect(barState(makeItem({ status: 'running', late: true }))).toBe('running')
    expect(barState(makeItem({ status: 'paused' }))).toBe('paused')
    expect(barState(makeItem({ late: true }))).toBe('late')
    expect(barState(makeItem({ status: 'claimed' }))).toBe('claimed')
    expect(barFor(makeItem({ late: true }), { ...opts, colourBy: 'state' }).style).toContain(STATE_COLOURS.late.bg)
  })
  it('when coloured by order, then all steps of one order share a tone and neighbouring orders differ', () => {
    const a = barFor(makeItem({ id: 1, orderId: 41 }), { ...opts, colourBy: 'order' }).style
    const b = barFor(makeItem({ id: 2, orderId: 41, kind: 'polishing' }), { ...opts, colourBy: 'order' }).style
    expect(a).toContain(orderTone(41))
    expect(b).toContain(orderTone(41))
    expect(orderTone(42)).not.toBe(orderTone(41))
    expect(new Set(Array.from({ length: ORDER_TONES.length }, (_, i) => orderTone(100 + i))).size).toBe(ORDER_TONES.length)
  })
  it('when a job is late or at risk, then its bars are outlined', () => {
    expect(barFor(makeItem({ late: true }), opts).className).toContain('board-bar--late-job')
    expect(barFor(makeItem(), { ...opts, jobStates: new Map([[10, 'at-risk']]) }).className).toContain('board-bar--at-risk')
  })
  it('when a draft moves the bar, then it is marked as moved (new ones differently)', () => {
    expect(barFor(makeItem(), { ...opts, moved: new Map([[1, ['time']]]) }).className).toMatch(/board-bar--moved board-bar--moved-shift/)
    expect(barFor(makeItem(), { ...opts, moved: new Map([[1, ['new']]]) }).className).toContain('board-bar--moved-new')
  })
  it('when the bar is running or the viewer only reads, then it cannot be dragged; outside work never changes row', () => {
    expect(barFor(makeItem({ status: 'running' }), opts).editable).toEqual({ updateTime: false, updateGroup: false, remove: false })
    expect(barFor(makeItem(), { ...opts, canEdit: false }).editable.updateTime).toBe(false)
    expect(barFor(makeItem({ outside: true }), opts).editable).toEqual({ updateTime: true, updateGroup: false, remove: false })
    expect(isDraggable(makeItem({ status: 'paused' }), true)).toBe(true)
  })
})

describe('contrast of bar text', () => {
  // WCAG 2.1, "contrast ratio" and "relative luminance" definitions (W3C); black on white is 21:1.
  it('when comparing black and white, then the ratio is 21', () => {
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 5)
  })
  // WebAIM contrast checker: #777777 on #ffffff is 4.48:1.
  it('when comparing mid grey on white, then the ratio matches the published checker', () => {
    expect(contrast('#777777', '#ffffff')).toBeCloseTo(4.48, 2)
  })
  it('when the bar is pale, then the text is dark; when it is deep, then white', () => {
    expect(inkOn('#e2c78f')).toBe('#2a2521')
    expect(inkOn('#4f5fa8')).toBe('#ffffff')
  })
})

describe('shading', () => {
  const bg = {
    window: { from: '2026-12-14', to: '2026-12-20', timeZone: 'Europe/London' },
    nonWorking: [
      { start: '2026-12-14T17:00:00.000Z', end: '2026-12-15T08:30:00.000Z' },
      { start: '2026-12-15T12:30:00.000Z', end: '2026-12-15T13:15:00.000Z' },
    ],
    closures: [{ name: 'Workshop closed: stocktake', startsOn: '2026-12-19', endsOn: '2026-12-19' }],
    leave: [{ personId: 3, startsOn: '2026-12-14', endsOn: '2026-12-16', reason: 'Holiday' }],
    downtime: [{ benchId: 7, startsAt: '2026-12-11 08:30:00+00', endsAt: '2026-12-11 12:30:00+00', reason: 'Lathe service' }],
  }
  it('when rows are by bench, then closed hours and closures span all rows and downtime sits on its bench', () => {
    const b = backgroundsFor(bg, 'bench')
    expect(b.filter((x) => x.className === 'board-bg-off')).toHaveLength(2)
    expect(b.find((x) => x.className === 'board-bg-closure')).toMatchObject({
      content: 'Workshop closed: stocktake',
      start: new Date('2026-12-19T00:00:00Z'),
      end: new Date('2026-12-20T00:00:00Z'),
    })
    expect(b.find((x) => x.className === 'board-bg-down')).toMatchObject({ group: 'b:7', start: new Date('2026-12-11T08:30:00Z') })
    expect(b.some((x) => x.className === 'board-bg-leave')).toBe(false)
  })
  it('when rows are by person, then leave sits on the person’s row through its last day', () => {
    const leave = backgroundsFor(bg, 'person').find((x) => x.className === 'board-bg-leave')!
    expect(leave).toMatchObject({ group: 'p:3', content: 'Holiday', start: new Date('2026-12-14T00:00:00Z'), end: new Date('2026-12-17T00:00:00Z') })
  })
  it('when folding to working hours, then nights go and the lunch break stays', () => {
    expect(foldedStretches(bg)).toEqual([{ start: new Date('2026-12-14T17:00:00Z'), end: new Date('2026-12-15T08:30:00Z') }])
  })
  it('when a timestamp comes in PostgreSQL form, then it is read as the same instant', () => {
    expect(parseInstant('2026-12-11 08:30:00+00').toISOString()).toBe('2026-12-11T08:30:00.000Z')
    expect(parseInstant('2026-06-11 08:30:00+01').toISOString()).toBe('2026-06-11T07:30:00.000Z')
  })
})

describe('windows', () => {
  // ISO 8601: 1 January 2026 is a Thursday, so week 2026-W01 starts on Monday 29 December 2025.
  it('when the anchor is New Year’s Day 2026, then the data window starts on the Monday of ISO week 1', () => {
    expect(dataWindowFor('2026-01-01')).toEqual({ from: '2025-12-29', to: '2026-01-25' })
  })
  // EU summer time (Directive 2000/84/EC): clocks go forward on the last Sunday of March, 29 March 2026, so London midnight on the 30th is 23:00 UTC.
  it('when summer time has begun, then workshop midnight is an hour before UTC midnight', () => {
    expect(dayStart('2026-03-30', 'Europe/London').toISOString()).toBe('2026-03-29T23:00:00.000Z')
    expect(visibleWindow('day', '2026-03-30', 'Europe/London').start.toISOString()).toBe('2026-03-30T06:30:00.000Z')
  })
  it('when stepping day by day, then the weekend is skipped', () => {
    expect(shiftAnchor('2026-12-04', 'day', 1)).toBe('2026-12-07')
    expect(shiftAnchor('2026-12-07', 'day', -1)).toBe('2026-12-04')
    expect(shiftAnchor('2026-12-02', 'week', 1)).toBe('2026-12-09')
  })
  it('when the view is panned past the loaded weeks, then it asks for another window', () => {
    const w = dataWindowFor('2026-12-02')
    expect(outsideWindow({ start: new Date('2026-12-01T08:00:00Z'), end: new Date('2026-12-05T08:00:00Z') }, w, 'Europe/London')).toBe(false)
    expect(outsideWindow({ start: new Date('2026-12-20T08:00:00Z'), end: new Date('2026-12-29T08:00:00Z') }, w, 'Europe/London')).toBe(true)
  })
  it('when the engine reports a makespan, then completion counts minutes from Monday 00:00 of the current ISO week', () => {
    // 25 103 minutes from Mon 30 Nov 2026 00:00 London = 17 days 10 h 23 min (the server's own conversion).
    expect(completionFromMakespan(25103, '2026-12-02T00:22:22Z', 'Europe/London').toISOString()).toBe('2026-12-17T10:23:00.000Z')
  })
})

describe('moves', () => {
  it('when a bar is dropped on another bench row, then the request names the bench and the version', () => {
    expect(moveRequest(makeItem(), { group: 'b:7', start: new Date('2026-12-03T09:00:00Z') }, 'bench')).toEqual({ version: 3, benchId: 7 })
  })
  it('when a bar is dropped later on a person row, then the request names the person and the new start', () => {
    expect(moveRequest(makeItem(), { group: 'p:5', start: new Date('2026-12-03T11:00:00Z') }, 'person')).toEqual({
      version: 3,
      personId: 5,
      start: '2026-12-03T11:00:00.000Z',
    })
  })
  it('when a bar is dropped on the outside row, then bench is cleared (the server refuses it with its reason)', () => {
    expect(moveRequest(makeItem(), { group: OUTSIDE_GROUP, start: new Date('2026-12-03T09:00:00Z') }, 'bench')).toEqual({ version: 3, benchId: null })
  })
  it('when nothing changed, then there is no request', () => {
    expect(moveRequest(makeItem(), { group: 'b:5', start: new Date('2026-12-03T09:00:20Z') }, 'bench')).toBeNull()
  })
})
