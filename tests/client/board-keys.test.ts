// Board tools in pure form: the move a key asks for, finding a job bag by number or customer, and the plan-against-actual line.
import { describe, expect, it } from 'vitest'
import type { BoardData, BoardItem } from '@shared/schemas/board'
import { actualSpan, actualSummary, barFor, keyMove, searchJobBags } from '@/components/board/board-vis'

const item = (o: Partial<BoardItem> = {}): BoardItem => ({
  id: 1,
  jobBagId: 10,
  jobBagNumber: 'MG26-0007-1',
  piece: 'Bezel ring',
  orderId: 5,
  orderNumber: 'MG26-0007',
  customerName: 'Bea Tamsworth',
  name: 'Set stone',
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
  estimateMinutes: 150,
  requiredLevel: 2,
  reason: null,
  late: false,
  lateJob: false,
  planned: null,
  actual: null,
  ...o,
})
const rows: Pick<BoardData, 'benches' | 'people'> = {
  benches: [
    { id: 4, name: 'Setting bench B', kind: 'setting', kinds: ['setting'] },
    { id: 7, name: 'Polishing station', kind: 'polishing', kinds: ['polishing'] },
    { id: 5, name: 'Setting bench A', kind: 'setting', kinds: ['setting'] },
    { id: 8, name: 'Bench C', kind: 'general', kinds: ['filing'] },
    { id: 9, name: 'Setting bench D', kind: 'setting', kinds: ['setting', 'filing'] },
  ],
  people: [
    { id: 1, name: 'Ines Harrowby', skills: { setting: 3 } },
    { id: 2, name: 'Tom Reyes', skills: { setting: 1 } },
    { id: 3, name: 'Ruth Calder', skills: { setting: 2 } },
  ],
}

describe('moving the selected bar by keyboard', () => {
  it('when → is pressed, then the start moves 15 minutes later; Shift+← an hour earlier', () => {
    // 09:00Z + 15 min = 09:15Z; 09:00Z − 60 min = 08:00Z (worked by hand).
    expect(keyMove(item(), 'ArrowRight', false, rows, 'bench')).toEqual({ body: { start: '2026-12-03T09:15:00.000Z', version: 3 }, what: '15 min later' })
    expect(keyMove(item(), 'ArrowLeft', true, rows, 'bench')).toEqual({ body: { start: '2026-12-03T08:00:00.000Z', version: 3 }, what: '1 h earlier' })
  })
  it('when ↓ is pressed on bench rows, then it goes to the next bench below equipped for the step, skipping others', () => {
    // Rows in order: B(4), Polishing(7), A(5) ← here, C(8, no setting), D(9).
    expect(keyMove(item(), 'ArrowDown', false, rows, 'bench')).toEqual({ body: { benchId: 9, version: 3 }, what: 'to Setting bench D' })
    expect(keyMove(item(), 'ArrowUp', false, rows, 'bench')).toEqual({ body: { benchId: 4, version: 3 }, what: 'to Setting bench B' })
    expect(keyMove(item({ benchId: 9 }), 'ArrowDown', false, rows, 'bench')).toEqual({ refused: 'No later row has a bench equipped for stone setting.' })
  })
  it('when ↓ is pressed on person rows, then it skips people below the level the step needs', () => {
    // Tom has setting at level 1, the step needs 2: Ruth is next.
    expect(keyMove(item(), 'ArrowDown', false, rows, 'person')).toEqual({ body: { personId: 3, version: 3 }, what: 'to Ruth Calder' })
  })
  it('when the bar is finished, running or outside work, then keys refuse without asking the server; other keys are not moves', () => {
    expect(keyMove(item({ status: 'done' }), 'ArrowRight', false, rows, 'bench')).toMatchObject({ refused: expect.stringMatching(/finished/) })
    expect(keyMove(item({ status: 'running' }), 'ArrowRight', false, rows, 'bench')).toMatchObject({ refused: expect.stringMatching(/being worked on/) })
    expect(keyMove(item({ outside: true, benchId: null, personId: null }), 'ArrowUp', false, rows, 'bench')).toMatchObject({
      refused: expect.stringMatching(/outside work/),
    })
    expect(keyMove(item(), 'Enter', false, rows, 'bench')).toBeNull()
  })
})

describe('finding a job bag', () => {
  const data = {
    items: [item(), item({ id: 2 }), item({ id: 3, jobBagId: 11, jobBagNumber: 'MG26-0012-1', orderNumber: 'MG26-0012', customerName: 'Corin Oakhill' })],
    jobs: [
      {
        jobBagId: 12,
        number: 'MG26-0020-1',
        piece: 'Signet',
        orderNumber: 'MG26-0020',
        customerName: 'Bea Tamsworth',
        due: '2026-12-20',
        expectedCompletion: null,
        latenessMinutes: 0,
        lateWorkingMinutes: 0,
        state: 'unplanned' as const,
        reason: null,
        stepsOffPlan: 0,
      },
    ],
  }
  it('when part of a number is typed, then that job bag is found with its bars counted', () => {
    expect(searchJobBags(data, '0012')).toEqual([
      { jobBagId: 11, number: 'MG26-0012-1', piece: 'Bezel ring', customerName: 'Corin Oakhill', orderNumber: 'MG26-0012', bars: 1 },
    ])
  })
  it('when a customer name is typed in any case, then all their job bags are found, including ones without bars', () => {
    expect(searchJobBags(data, 'bea TAMS').map((h) => [h.number, h.bars])).toEqual([
      ['MG26-0007-1', 2],
      ['MG26-0020-1', 0],
    ])
  })
  it('when nothing matches, then the list is empty', () => {
    expect(searchJobBags(data, 'zzz')).toEqual([])
    expect(searchJobBags(data, '   ')).toEqual([])
  })
  it('when a job bag is found, then its bars are marked and the others dimmed', () => {
    const o = { rowsBy: 'bench' as const, colourBy: 'kind' as const, canEdit: true, foundJobBagId: 11 }
    expect(barFor(data.items[2]!, o).className).toContain('board-bar--found')
    expect(barFor(data.items[0]!, o).className).toContain('board-bar--dimmed')
  })
})

describe('plan against what happened', () => {
  const tz = 'Europe/London'
  it('when a step is finished, then the line gives its finish and minutes worked against the estimate', () => {
    // 2 December 2026 is a Wednesday; London is on GMT in December, so 12:20Z reads 12:20.
    const done = item({
      status: 'done',
      estimateMinutes: 150,
      actual: { start: '2026-12-02T09:10:00.000Z', end: '2026-12-02T12:20:00.000Z', workedMinutes: 170, records: 2, fromRecords: true },
    })
    expect(actualSummary(done, tz)).toBe('Finished Wed 2 Dec 12:20 · worked 2 h 50 min against 2 h 30 min estimated')
    expect(actualSpan(done, tz)).toBe('Wed 2 Dec 09:10–12:20')
    expect(barFor(done, { rowsBy: 'bench', colourBy: 'kind', canEdit: true })).toMatchObject({ editable: { updateTime: false, updateGroup: false } })
  })
  it('when a step is running, then the line says since when and what is worked so far', () => {
    const running = item({ status: 'running', actual: { start: '2026-12-03T08:40:00.000Z', end: null, workedMinutes: 35.4, records: 1, fromRecords: true } })
    expect(actualSummary(running, tz)).toBe('Running since Thu 3 Dec 08:40 · worked 35 min so far of 2 h 30 min estimated')
    expect(actualSummary(item(), tz)).toBeNull()
  })
})
