// A bar's estimate in its details panel and its hover card: bench work in hours and minutes, outside work (casting,
// hallmarking) in the working days it is away.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import { createPinia } from 'pinia'
import type { BoardItem } from '@shared/schemas/board'
import BoardBarDetails from '@/components/board/BoardBarDetails.vue'
import BoardBarTooltip from '@/components/board/BoardBarTooltip.vue'
import JobBagRouting from '@/components/jobbag/JobBagRouting.vue'

const base: BoardItem = {
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
const estimateOf = (item: BoardItem) =>
  mount(BoardBarDetails, {
    props: { item, benchName: new Map([[1, 'Setting bench']]), personName: new Map([[4, 'Ines']]), timeZone: 'Europe/London', canEdit: false, pinning: false },
    global: { plugins: [ElementPlus] },
  })
    .find('[data-test="bar-estimate"]')
    .text()

describe('estimate in the bar details', () => {
  it('when the step is bench work of 90 minutes, then it reads in hours and minutes and says nothing of outside work', () => {
    // 90 minutes = 1 hour 30 minutes, worked out by hand.
    expect(estimateOf(base)).toBe('1 h 30 min')
  })

  it('when the step is a casting sent out for 5 working days (no bench minutes), then it reads 5 working days away, never 0 min', () => {
    const text = estimateOf({ ...base, name: 'Cast', kind: 'casting', outside: true, benchId: null, personId: null, estimateMinutes: 0, outsideDays: 5 })
    expect(text).toBe('5 working days away (outside work)')
  })

  it('when outside work is away for one working day, then the day is singular', () => {
    expect(estimateOf({ ...base, outside: true, estimateMinutes: 0, outsideDays: 1 })).toBe('1 working day away (outside work)')
  })
})

describe('estimate in the hover card', () => {
  const tipOf = (item: BoardItem) =>
    mount(BoardBarTooltip, {
      props: {
        item,
        rect: new DOMRect(10, 10, 100, 20),
        benchName: new Map([[1, 'Setting bench']]),
        personName: new Map([[4, 'Ines']]),
        timeZone: 'Europe/London',
      },
      global: { plugins: [ElementPlus] },
    })
      .find('[data-test="tip-estimate"]')
      .text()

  it('when hallmarking is away for 4 working days, then the card says so, not 0 min', () => {
    expect(tipOf({ ...base, name: 'Hallmarking', outside: true, benchId: null, personId: null, estimateMinutes: 0, outsideDays: 4 })).toBe(
      '4 working days away (outside work)',
    )
  })

  it('when the step is bench work of 90 minutes, then the card shows 1 h 30 min', () => {
    expect(tipOf(base)).toBe('1 h 30 min')
  })
})

describe('the person’s speed beside the estimate', () => {
  const details = (item: BoardItem) =>
    mount(BoardBarDetails, {
      props: {
        item,
        benchName: new Map([[1, 'Setting bench']]),
        personName: new Map([[4, 'Priya']]),
        timeZone: 'Europe/London',
        canEdit: false,
        pinning: false,
      },
      global: { plugins: [ElementPlus] },
    })

  it('when Priya works at speed 1.1, then the estimate says she works it in 1 h 22 min, the length of the planned bar', () => {
    // 90 ÷ 1.1 = 81.8, rounded up to 82 min = 1 h 22 min (hand-worked), as 09:16–10:38 on the board.
    const item = { ...base, speed: 1.1, start: '2026-03-02T09:16:00Z', end: '2026-03-02T10:38:00Z' }
    expect(details(item).find('[data-test="bar-estimate"]').text()).toBe('1 h 30 min; Priya works it in 1 h 22 min (speed 1.1)')
    const tip = mount(BoardBarTooltip, {
      props: {
        item,
        rect: new DOMRect(10, 10, 100, 20),
        benchName: new Map([[1, 'Setting bench']]),
        personName: new Map([[4, 'Priya']]),
        timeZone: 'Europe/London',
      },
      global: { plugins: [ElementPlus] },
    })
    expect(tip.find('[data-test="tip-speed"]').text()).toBe('Estimate at standard speed; Priya works it in 1 h 22 min (speed 1.1)')
  })

  it('when a trainee works at speed 0.75, then the longer time is named', () => {
    // 90 ÷ 0.75 = 120 min = 2 h (hand-worked).
    expect(
      details({ ...base, speed: 0.75 })
        .find('[data-test="bar-estimate"]')
        .text(),
    ).toBe('1 h 30 min; Priya works it in 2 h (speed 0.75)')
  })

  it('when the person works at the standard speed, then nothing is added', () => {
    expect(
      details({ ...base, speed: 1 })
        .find('[data-test="bar-estimate"]')
        .text(),
    ).toBe('1 h 30 min')
  })
})

describe('the job bag’s routing', () => {
  it('when the routing lists each step’s minutes, then the column says they are the estimate, not the plan', async () => {
    const w = mount(JobBagRouting, { props: { operations: [], editable: false }, global: { plugins: [ElementPlus, createPinia()] } })
    await flushPromises()
    const headers = w.findAll('th').map((h) => h.text())
    expect(headers.some((h) => /^Estimate/.test(h))).toBe(true)
    expect(headers.some((h) => /Planned/.test(h))).toBe(false)
  })
})
