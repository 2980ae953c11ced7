// The order's money panel on a cancelled order: nothing is asked of the customer — no deposit owed, no link to pay, no cash to
// record — where before cancelling the same order asked its £150.00 deposit (30 % of £500.00, worked by hand).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { OrderMoney } from '@shared/schemas/payment'

const money = vi.hoisted(() => ({ value: null as unknown as OrderMoney }))
const unpaid = (o: Partial<OrderMoney>): OrderMoney => ({
  orderId: 7,
  orderNumber: 'MG26-0007',
  currency: 'GBP',
  priceMinor: 50000,
  depositMinor: 15000,
  paidMinor: 0,
  owedMinor: 50000,
  depositPaid: false,
  vat: null,
  quoteId: null,
  payments: [],
  links: [],
  ...o,
})
vi.mock('@/api/payments', () => ({ getOrderMoney: vi.fn(async () => money.value), createOrderLink: vi.fn(), refundPayment: vi.fn() }))
const { default: OrderMoneyPanel } = await import('@/components/money/OrderMoneyPanel.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
})
async function open(m: OrderMoney) {
  money.value = m
  w = mount(OrderMoneyPanel, { props: { orderId: 7 }, global: { plugins: [createPinia(), ElementPlus], stubs: { RouterLink: true } } })
  await flushPromises()
  return w
}

describe('a cancelled order’s money', () => {
  it('when the order is cancelled with nothing paid, then it says nothing is to be collected and offers no link or cash to record', async () => {
    const before = await open(unpaid({}))
    expect(before.get('[data-test=money-deposit-state]').text()).toBe('deposit owed £150.00')
    expect(before.find('[data-test=money-link-deposit]').exists()).toBe(true)
    before.unmount()
    const v = await open(unpaid({ owedMinor: 0, cancelled: true }))
    expect(v.get('[data-test=money-deposit-state]').text()).toBe('order cancelled: nothing to collect')
    expect(v.get('[data-test=money-owed]').text()).toBe('£0.00')
    expect(v.find('[data-test=money-link-deposit]').exists()).toBe(false)
    expect(v.find('[data-test=money-link-balance]').exists()).toBe(false)
    expect(v.find('[data-test=money-record]').exists()).toBe(false)
  })
})
