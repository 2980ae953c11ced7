// Bars of bench work that pauses: drawn as their worked pieces, and stacked in lanes by those pieces rather than start to end,
// so a part-timer's step paused over an afternoon and a night leaves its row free for the work planned in its pause; and the
// marks of a late piece on every one of its bars. Times by hand in UTC (the workshop's London clock in December).
import { describe, expect, it } from 'vitest'
import type { BoardItem } from '@shared/schemas/board'
import { assignLanes, barFor, barPieces, workedStretches, type TimelineBar } from '@/components/board/board-vis'

const makeItem = (o: Partial<BoardItem> = {}): BoardItem => ({
  id: 1,
  jobBagId: 10,
  jobBagNumber: 'MG26-0001-1',
  piece: 'Signet ring',
  orderId: 5,
  orderNumber: 'MG26-0001',
  customerName: 'Bea Tamsworth',
  name: 'Cut off and clean',
  kind: 'fabrication',
  kindName: 'Fabrication',
  color: '#4f5fa8',
  hazards: [],
  outside: false,
  status: 'ready',
  benchId: 5,
  personId: 1,
  start: '2026-12-07T09:00:00.000Z',
  end: '2026-12-07T10:00:00.000Z',
  pinned: false,
  version: 1,
  estimateMinutes: 60,
  requiredLevel: 1,
  reason: null,
  late: false,
  lateJob: false,
  planned: null,
  actual: null,
  ...o,
})
const opts = { rowsBy: 'bench' as const, colourBy: 'kind' as const, canEdit: true }

/** Mo works mornings (08:30–12:30): "Cut off and clean" (94 min) from Mon 12:08 is worked 12:08–12:30 and Tue 08:30–09:42. */
const cut = makeItem({
  id: 1,
  start: '2026-12-07T12:08:00.000Z',
  end: '2026-12-08T09:42:00.000Z',
  estimateMinutes: 94,
  segments: [
    { start: '2026-12-07T12:08:00.000Z', end: '2026-12-07T12:30:00.000Z' },
    { start: '2026-12-08T08:30:00.000Z', end: '2026-12-08T09:42:00.000Z' },
  ],
})
const onBench = (id: number, start: string, end: string, o: Partial<BoardItem> = {}) =>
  makeItem({ id, jobBagId: 10 + id, name: `Step ${id}`, personId: 2, start: `2026-12-0${start}:00.000Z`, end: `2026-12-0${end}:00.000Z`, ...o })
const lanes = (items: BoardItem[]) => Object.fromEntries(assignLanes(items.map((i) => barFor(i, opts))).map((b) => [b.id, b.lane]))

describe('lanes from the stretches bars are worked', () => {
  it("when other bars fall in a paused step's pause on its bench, then they share its lane: the bench is not double booked", () => {
    // Ada's work Mon 13:00–15:00, 15:00–16:30 and Tue 10:00–11:00 meets neither 12:08–12:30 nor Tue 08:30–09:42.
    const items = [cut, onBench(2, '7T13:00', '7T15:00'), onBench(3, '7T15:00', '7T16:30'), onBench(4, '8T10:00', '8T11:00')]
    expect(lanes(items)).toEqual({ 1: 0, 2: 0, 3: 0, 4: 0 })
  })
  it("when a bar meets one of a paused step's worked pieces, then it goes in the next lane", () => {
    // Mon 12:00–12:20 meets 12:08–12:30; Tue 09:00–10:00 meets Tue 08:30–09:42; Mon 14:00–15:00 meets neither.
    const items = [cut, onBench(2, '7T12:00', '7T12:20'), onBench(3, '8T09:00', '8T10:00'), onBench(4, '7T14:00', '7T15:00')]
    // Taken by start: 12:00 (lane 0), 12:08 (meets it: lane 1), 14:00 (lane 0 is free again), Tue 09:00 (meets the cut in lane 1, lane 0 is free).
    expect(lanes(items)).toEqual({ 2: 0, 1: 1, 4: 0, 3: 0 })
  })
  it('when bars only touch, then they share a lane; when they overlap, the later one goes below', () => {
    const items = [onBench(2, '7T09:00', '7T10:00'), onBench(3, '7T10:00', '7T11:00'), onBench(4, '7T10:30', '7T11:30')]
    expect(lanes(items)).toEqual({ 2: 0, 3: 0, 4: 1 })
  })
  it('when bars are on different rows, then each row has lanes of its own', () => {
    const items = [onBench(2, '7T09:00', '7T10:00'), onBench(3, '7T09:00', '7T10:00', { benchId: 7 })]
    const bars = assignLanes(items.map((i) => barFor(i, opts)))
    expect(bars.map((b: TimelineBar) => [b.group, b.subgroup])).toEqual([
      ['b:5', 'lane-0'],
      ['b:7', 'lane-0'],
    ])
  })
})

describe('a paused step drawn as its worked pieces', () => {
  it('when the whole clock is shown, then its pieces lie where they are worked across the bar', () => {
    // The bar is Mon 12:08 to Tue 09:42: 1,294 min. Pieces: 0 for 22 min; from 1,222 min (Tue 08:30) for 72 min.
    expect(barPieces(cut, null)).toEqual([
      { left: 0, width: 1.7 }, // 22 / 1294
      { left: 94.436, width: 5.564 }, // 1222 / 1294, 72 / 1294
    ])
  })
  it('when the night is folded away, then the pieces are placed on the folded scale', () => {
    // Folded Mon 17:00–Tue 08:30 (930 min): 364 min are shown; Tue 08:30 is 292 shown minutes after Mon 12:08.
    const folded = [{ start: new Date('2026-12-07T17:00:00.000Z'), end: new Date('2026-12-08T08:30:00.000Z') }]
    expect(barPieces(cut, folded)).toEqual([
      { left: 0, width: 6.044 }, // 22 / 364
      { left: 80.22, width: 19.78 }, // 292 / 364, 72 / 364
    ])
  })
  it('when a bar is drawn as pieces, then it stays one bar that paints only its pieces, and its stretches are written out', () => {
    const b = barFor(cut, opts)
    expect(b).toMatchObject({ id: 1, start: new Date(cut.start), end: new Date(cut.end), align: 'left', limitSize: false })
    expect(b.className).toContain('board-bar--split')
    expect(b.style).toContain('--bar-bg: #4f5fa8')
    expect(b.style).not.toContain('background-color')
    expect(b.pieces).toHaveLength(2)
    expect(workedStretches(cut, 'Europe/London')).toBe('Mon 7 Dec 12:08–12:30, Tue 8 Dec 08:30–09:42')
    // Work in one stretch is a plain bar.
    const plain = barFor(onBench(2, '7T13:00', '7T15:00'), opts)
    expect(plain.className).not.toContain('board-bar--split')
    expect(plain.pieces).toBeUndefined()
  })
})

describe('the marks of a late piece', () => {
  it('when a job bag finishes late, then every one of its bars is outlined, and the bar past the due date is marked as well', () => {
    const earlier = barFor(makeItem({ lateJob: true, late: false }), opts).className.split(' ')
    const last = barFor(makeItem({ lateJob: true, late: true }), opts).className.split(' ')
    const onTime = barFor(makeItem(), opts).className.split(' ')
    expect(earlier).toContain('board-bar--late-job')
    expect(earlier).not.toContain('board-bar--past-due')
    expect(last).toEqual(expect.arrayContaining(['board-bar--late-job', 'board-bar--past-due']))
    expect(onTime).not.toContain('board-bar--late-job')
  })
})
