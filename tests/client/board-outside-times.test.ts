// Outside work's times on the board's hover card and details panel: the day it goes out and the day it is back, never 00:00
// (the planner counts outside work in whole workshop days, so its planned end is the midnight that closes its last day).
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { BoardItem } from '@shared/schemas/board'
import BoardBarDetails from '@/components/board/BoardBarDetails.vue'
import BoardBarTooltip from '@/components/board/BoardBarTooltip.vue'

// 1 March 2026 is a Sunday, so 2 March is a Monday, 3 March a Tuesday, 5 March a Thursday, 6 March a Friday. London is on
// GMT until 29 March (UTC+0); Berlin on CET (UTC+1), so its midnight of 6 March is 5 March 23:00Z.
const bench: BoardItem = {
  id: 7,
  jobBagId: 3,
  jobBagNumber: 'WF-1042-1',
  piece: 'Signet ring',
  orderId: 2,
  orderNumber: 'WF-1042',
  customerName: 'A. Customer',
  name: 'Set stone',
  kind: 'setting',
  kindName: 'Stone setting',
  color: '#3f7f8c',
  hazards: [],
  outside: false,
  status: 'ready',
  benchId: 1,
  personId: 4,
  start: '2026-03-02T09:00:00Z',
  end: '2026-03-02T10:30:00Z',
  pinned: false,
  version: 1,
  estimateMinutes: 90,
  requiredLevel: 1,
  reason: null,
  late: false,
  lateJob: false,
  planned: null,
  actual: null,
}
/** A casting away for 2 working days, counted from the days that open after it leaves (outsideWorkEnd). */
const casting: BoardItem = {
  ...bench,
  id: 8,
  name: 'Cast',
  kind: 'casting',
  kindName: 'Casting',
  outside: true,
  benchId: null,
  personId: null,
  estimateMinutes: 0,
  outsideDays: 2,
  // Ready Tue 3 Mar 14:35; the workshop days opening after that are Wed 4 and Thu 5 Mar, so it is back at the close of Thu 5 Mar.
  start: '2026-03-03T14:35:00Z',
  end: '2026-03-06T00:00:00Z',
}

const tip = (item: BoardItem, timeZone = 'Europe/London') =>
  mount(BoardBarTooltip, {
    props: { item, rect: new DOMRect(10, 10, 100, 20), benchName: new Map([[1, 'Setting bench']]), personName: new Map([[4, 'Ines']]), timeZone },
    global: { plugins: [ElementPlus] },
  })
const details = (item: BoardItem, timeZone = 'Europe/London') =>
  mount(BoardBarDetails, {
    props: { item, benchName: new Map([[1, 'Setting bench']]), personName: new Map([[4, 'Ines']]), timeZone, canEdit: false, pinning: false },
    global: { plugins: [ElementPlus] },
  })

describe('outside work on the hover card', () => {
  it('when a casting is planned to come back at the midnight closing Thu 5 Mar, then the card says it is back by the end of Thu 5 Mar, not 00:00', () => {
    const w = tip(casting)
    expect(w.find('[data-test="bar-tip-span"]').text()).toBe('Out Tue 3 Mar 14:35, back by the end of Thu 5 Mar')
    expect(w.text()).not.toContain('00:00')
  })

  it('when it waited for the workshop to open (out at midnight, Berlin time), then it goes out at opening on that day', () => {
    // Tue 3 Mar 00:00 CET = 2 Mar 23:00Z; Fri 6 Mar 00:00 CET = 5 Mar 23:00Z: out on Tue, three days Tue–Thu.
    const w = tip({ ...casting, outsideDays: 3, start: '2026-03-02T23:00:00Z', end: '2026-03-05T23:00:00Z' }, 'Europe/Berlin')
    expect(w.find('[data-test="bar-tip-span"]').text()).toBe('Out at opening on Tue 3 Mar, back by the end of Thu 5 Mar')
    expect(w.text()).not.toContain('00:00')
  })

  it('when a casting has been sent out and is away, then the actual and planned lines name the days, not 00:00', () => {
    const w = tip({
      ...casting,
      status: 'running',
      start: '2026-03-03T10:12:00Z',
      planned: { start: '2026-03-03T10:12:00Z', end: '2026-03-06T00:00:00Z' },
      actual: { start: '2026-03-03T10:12:00Z', end: null, workedMinutes: 0, records: 0, fromRecords: false },
    })
    expect(w.find('[data-test="bar-tip-actual"]').text()).toBe('Sent out Tue 3 Mar 10:12')
    expect(w.find('[data-test="bar-tip-actual-span"]').text()).toBe('Actual: out since Tue 3 Mar 10:12')
    expect(w.find('[data-test="bar-tip-planned"]').text()).toBe('Planned: out Tue 3 Mar 10:12, back by the end of Thu 5 Mar')
    expect(w.text()).not.toContain('00:00')
  })

  it('when a casting was booked back at 15:20, then the actual line gives that time', () => {
    const w = tip({
      ...casting,
      status: 'done',
      start: '2026-03-03T10:12:00Z',
      end: '2026-03-05T15:20:00Z',
      planned: { start: '2026-03-03T10:12:00Z', end: '2026-03-06T00:00:00Z' },
      actual: { start: '2026-03-03T10:12:00Z', end: '2026-03-05T15:20:00Z', workedMinutes: 0, records: 0, fromRecords: false },
    })
    expect(w.find('[data-test="bar-tip-actual"]').text()).toBe('Back Thu 5 Mar 15:20 · sent out Tue 3 Mar 10:12')
    expect(w.find('[data-test="bar-tip-actual-span"]').text()).toBe('Actual: out Tue 3 Mar 10:12, back Thu 5 Mar 15:20')
    expect(w.find('[data-test="bar-tip-planned"]').text()).toBe('Planned: out Tue 3 Mar 10:12, back by the end of Thu 5 Mar')
  })

  it('when finished outside work is recorded from opening to the close of its last day, then it reads as those days', () => {
    const w = tip({
      ...casting,
      status: 'done',
      start: '2026-03-03T00:00:00Z',
      planned: { start: '2026-03-03T00:00:00Z', end: '2026-03-06T00:00:00Z' },
      actual: { start: '2026-03-03T00:00:00Z', end: '2026-03-06T00:00:00Z', workedMinutes: 0, records: 0, fromRecords: false },
    })
    expect(w.find('[data-test="bar-tip-actual"]').text()).toBe('Back at the end of Thu 5 Mar · sent out at opening on Tue 3 Mar')
    expect(w.find('[data-test="bar-tip-actual-span"]').text()).toBe('Actual: out at opening on Tue 3 Mar, back at the end of Thu 5 Mar')
    expect(w.text()).not.toContain('00:00')
  })

  it('when the bar is bench work, then the card still shows its clock times', () => {
    expect(tip(bench).find('[data-test="bar-tip-span"]').text()).toBe('Mon 2 Mar 09:00–10:30')
  })
})

describe('outside work in the bar details', () => {
  it('when a casting is planned to come back at the midnight closing Thu 5 Mar, then Planned says back by the end of Thu 5 Mar', () => {
    const w = details(casting)
    expect(w.find('[data-test="bar-details-planned"]').text()).toBe('out Tue 3 Mar 14:35, back by the end of Thu 5 Mar')
    expect(w.text()).not.toContain('00:00')
  })

  it('when a casting is away, then Planned and Actual name the days, with no clock hours', () => {
    const w = details({
      ...casting,
      status: 'running',
      start: '2026-03-03T10:12:00Z',
      planned: { start: '2026-03-03T10:12:00Z', end: '2026-03-06T00:00:00Z' },
      actual: { start: '2026-03-03T10:12:00Z', end: null, workedMinutes: 0, records: 0, fromRecords: false },
    })
    expect(w.find('[data-test="bar-details-planned"]').text()).toBe('out Tue 3 Mar 10:12, back by the end of Thu 5 Mar')
    expect(w.find('[data-test="bar-details-actual"]').text()).toBe('out since Tue 3 Mar 10:12')
    expect(w.text()).not.toContain('00:00')
    // Away at the outside firm, not at a bench.
    expect(w.find('[data-test="bar-details-fixed"]').text()).toBe('Sent out and away: it cannot be moved.')
  })

  it('when the bar is bench work, then Planned still shows its clock times, and finished work its hours on the clock', () => {
    expect(details(bench).find('[data-test="bar-details-planned"]').text()).toBe('Mon 2 Mar 09:00–10:30')
    const done = details({
      ...bench,
      status: 'done',
      planned: { start: '2026-03-02T09:00:00Z', end: '2026-03-02T10:30:00Z' },
      actual: { start: '2026-03-02T09:10:00Z', end: '2026-03-02T11:00:00Z', workedMinutes: 110, records: 1, fromRecords: true },
    })
    // 09:00–10:30 is 90 min = 1 h 30 min; 09:10–11:00 is 110 min = 1 h 50 min (hand-worked).
    expect(done.find('[data-test="bar-details-planned"]').text()).toBe('Mon 2 Mar 09:00–10:30 (1 h 30 min on the clock)')
    expect(done.find('[data-test="bar-details-actual"]').text()).toBe('Mon 2 Mar 09:10–11:00 (1 h 50 min on the clock)')
  })
})
