// The board's list of jobs at risk: dates are due dates (a job bag's due date is not a promise to the customer), lateness in
// working time, and an honest line when nothing is planned.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import BoardJobRisk from '@/components/board/BoardJobRisk.vue'
import type { BoardJob } from '@shared/schemas/board'

const job = (over: Partial<BoardJob>): BoardJob => ({
  jobBagId: 1,
  number: 'MG26-0001-1',
  piece: 'Signet ring',
  orderNumber: 'MG26-0001',
  customerName: 'A. Customer',
  due: '2026-12-11',
  expectedCompletion: '2026-12-18T09:30:00.000Z',
  latenessMinutes: 0,
  lateWorkingMinutes: 0,
  state: 'on-time',
  reason: null,
  stepsOffPlan: 0,
  ...over,
})
const risk = (jobs: BoardJob[]) => mount(BoardJobRisk, { props: { jobs, timeZone: 'Europe/London', dayMinutes: 465 } }).text()

describe('BoardJobRisk', () => {
  it('when a job is late, then its line names the due date, not a promise, and the lateness in working days and hours', () => {
    // Hand-worked: 4 working days of 465 min + 60 min = 1920 working minutes → "4 working days 1 h late" (2026-12-11 is a Friday).
    const text = risk([job({ state: 'late', latenessMinutes: 9999, lateWorkingMinutes: 1920 })])
    expect(text).toContain('Due Fri 11 Dec')
    expect(text).not.toContain('Promised')
    expect(text).toMatch(/4 working days 1 h late/)
  })

  it('when nothing is planned yet, then it does not claim every planned job is on time', () => {
    const text = risk([job({ state: 'unplanned', expectedCompletion: null })])
    expect(text).toContain('No job is planned yet.')
    expect(text).not.toContain('Every planned job')
    expect(text).toContain('1 job not planned yet')
  })

  it('when no planned job is tight, then the line states the rule the count uses, with the working day in hours', () => {
    // The rule: tight = finishing on the due day, or with less than one working day (here 465 min = 7 h 45 min) to spare.
    expect(risk([job({ state: 'on-time' })])).toContain('Every planned job finishes before its due day with at least one working day (7 h 45 min) to spare.')
  })

  it('when the count of tight jobs is shown, then it says what tight means', () => {
    const w = mount(BoardJobRisk, { props: { jobs: [job({ state: 'on-time' })], timeZone: 'Europe/London', dayMinutes: 465 } })
    const count = w.get('[data-test=job-risk-counts]')
    expect(count.text()).toBe('0 late · 0 tight')
    expect(count.attributes('title')).toBe(
      'Tight: finishing on its due day, or with less than one working day (7 h 45 min) to spare. Late: finishing after its due day.',
    )
  })
})
