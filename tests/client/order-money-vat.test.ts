// The order's money panel (order drawer, job bag page): where the order's price carries VAT, the payments table has a VAT column
// with each payment's VAT as its receipt states it, and says how much of the price's VAT is in what is paid. Hand-worked at 20 %
// (the UK standard rate as HMRC publishes it): £100.00 holds 100 / 6 = £16.67; the £50.00 deposit £8.33, so the £50.00 balance
// that settles the order carries the rest, £8.34; a payment taken at 5 % (the reduced rate) says its rate.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { OrderMoney, Payment } from '@shared/schemas/payment'

const payment = (id: number, amountMinor: number, vat: Payment['vat'], extra: Partial<Payment> = {}): Payment => ({
  id,
  orderId: 7,
  quoteId: null,
  paymentLinkId: null,
  method: 'cash',
  purpose: id === 1 ? 'deposit' : 'balance',
  amountMinor,
  currency: 'GBP',
  providerRef: null,
  toRefund: false,
  refundOf: null,
  note: '',
  recordedBy: 1,
  recordedByName: 'Sam Sales',
  receivedAt: `2026-12-0${id}T10:00:00.000Z`,
  createdAt: `2026-12-0${id}T10:00:00.000Z`,
  refundedMinor: 0,
  vat,
  ...extra,
})
const NUMBER = 'GB 123 4567 89'
const money = vi.hoisted(() => ({ value: null as unknown as OrderMoney }))
const base = (payments: Payment[], vat: OrderMoney['vat']): OrderMoney => ({
  orderId: 7,
  orderNumber: 'MG26-0007',
  currency: 'GBP',
  priceMinor: 10000,
  depositMinor: 5000,
  paidMinor: payments.filter((p) => !p.toRefund).reduce((n, p) => n + p.amountMinor, 0),
  owedMinor: 0,
  depositPaid: true,
  vat,
  quoteId: null,
  payments,
  links: [],
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
const headers = (v: VueWrapper) => v.findAll('[data-test=money-payments] thead th').map((h) => h.text())
const vatCells = (v: VueWrapper) => v.findAll('[data-test=money-payment-vat]').map((c) => c.text())

describe('the VAT on an order’s payments', () => {
  it('when £100.00 at 20 % is paid as £50.00 and £50.00, then the VAT column reads £8.33 and £8.34, all £16.67 of the price’s; an order without VAT has no such column', async () => {
    const v = await open(
      base([payment(1, 5000, { ratePct: 20, vatNumber: NUMBER, vatMinor: 833 }), payment(2, 5000, { ratePct: 20, vatNumber: NUMBER, vatMinor: 834 })], {
        ratePct: 20,
        vatNumber: NUMBER,
        vatMinor: 1667,
        netMinor: 8333,
      }),
    )
    expect(headers(v)).toContain('VAT')
    expect(vatCells(v)).toEqual(['£8.33', '£8.34'])
    expect(v.get('[data-test=money-payments-vat]').text()).toMatch(/^VAT in what is paid: £16\.67 of the £16\.67 in the price\./)

    // An order whose price was agreed without VAT: no VAT column and no VAT note.
    v.unmount()
    const plain = await open(base([payment(1, 5000, null)], null))
    expect(headers(plain)).not.toContain('VAT')
    expect(plain.find('[data-test=money-payment-vat]').exists()).toBe(false)
    expect(plain.find('[data-test=money-payments-vat]').exists()).toBe(false)
  })

  it('when a payment was taken at 5 % or without VAT, then its cell says its rate or a dash, and one waiting to be refunded is not counted as paid', async () => {
    const v = await open(
      base(
        [
          payment(1, 5000, { ratePct: 20, vatNumber: NUMBER, vatMinor: 833 }),
          // 50 × 5 / 105 = 2.380… → £2.38.
          payment(2, 5000, { ratePct: 5, vatNumber: NUMBER, vatMinor: 238 }),
          payment(3, 2000, null),
          payment(4, 1200, { ratePct: 20, vatNumber: NUMBER, vatMinor: 200 }, { toRefund: true }),
        ],
        { ratePct: 20, vatNumber: NUMBER, vatMinor: 1667, netMinor: 8333 },
      ),
    )
    expect(vatCells(v)).toEqual(['£8.33', '£2.38 at 5%', '—', '£2.00'])
    // £8.33 + £2.38 = £10.71; the £12.00 waiting to be refunded does not count.
    expect(v.get('[data-test=money-payments-vat]').text()).toMatch(/^VAT in what is paid: £10\.71 of the £16\.67/)
  })
})
