// The order list's Expected column: the day the live plan expects the order done, late or tight in working time as the server
// words it, and a plain mark when work of it is not in the plan; nothing for an order whose work is over.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import OrderExpected from '@/components/orders/OrderExpected.vue'
import type { OrderExpected as Expected } from '@shared/schemas/order'

const planned = (over: Partial<Expected> = {}): Expected => ({
  date: '2026-12-16',
  risk: 'on-time',
  margin: '2 working days to spare',
  offPlan: 'none',
  done: false,
  cancelled: false,
  ...over,
})
const cell = (expected: Expected | null, pieces = 1) => mount(OrderExpected, { props: { expected, pieces, dueDay: '2026-12-14' } })

describe('OrderExpected', () => {
  it('when the order will be late, then the cell gives the expected day and the working time late, marked as late', () => {
    // 2026-12-16 is a Wednesday.
    const w = cell(planned({ risk: 'late', margin: '1 working day 2 h late' }))
    expect(w.findAll('[data-test=order-expected] > div').map((d) => d.text())).toEqual(['Wed 16 Dec 2026', '1 working day 2 h late'])
    expect(w.get('.risk--late').text()).toBe('1 working day 2 h late')
    expect(w.get('[data-test=order-expected]').attributes('title')).toBe('Expected on the live plan; due by the end of Mon 14 Dec 2026')
  })

  it('when the order is on time, then the cell gives the day and the time to spare, not marked as late', () => {
    const w = cell(planned())
    expect(w.find('.risk--late').exists()).toBe(false)
    expect(w.get('.risk--on-time').text()).toBe('2 working days to spare')
  })

  it('when none of its steps is in the live plan, then the cell says so instead of a day', () => {
    expect(cell(planned({ date: null, risk: null, margin: null, offPlan: 'all' })).text()).toBe('not in the plan')
  })

  it('when the order has no pieces yet, then the cell says that rather than that it is not in the plan', () => {
    expect(cell(planned({ date: null, risk: null, margin: null, offPlan: 'all' }), 0).text()).toBe('no pieces yet')
  })

  it('when some of its steps are not in the live plan, then the cell gives the day of the rest and says some are not', () => {
    const w = cell(planned({ offPlan: 'some' }))
    expect(w.text()).toContain('Wed 16 Dec 2026')
    expect(w.text()).toContain('some steps not in the plan')
  })

  it('when every piece of an open order is cancelled, then the cell says so rather than that it is not in the plan', () => {
    expect(cell(planned({ date: null, risk: null, margin: null, cancelled: true })).text()).toBe('every piece cancelled')
  })

  it('when every job bag is finished, then it reads done; when the order is ready, collected or cancelled, then only a dash', () => {
    expect(cell(planned({ date: null, risk: null, margin: null, done: true })).text()).toBe('done')
    expect(cell(null).text()).toBe('—')
  })
})
