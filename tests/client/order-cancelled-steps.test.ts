// A cancelled order's drawer gives its steps no planned times: the plan holds none of them, so each says it is off the plan (a
// finished step says when it was done); a cancelled job bag of an order still going reads the same, its other bag as planned.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { OrderDetail, OrderJobBag } from '@shared/schemas/order'

const ordersApi = vi.hoisted(() => ({ listOrders: vi.fn(), getOrder: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn(), orderCustomersMetal: vi.fn() }))
vi.mock('@/api/orders', () => ordersApi)
const promiseApi = vi.hoisted(() => ({ orderForecast: vi.fn(async (): Promise<unknown> => Promise.reject(new Error('not here'))) }))
vi.mock('@/api/promise', () => promiseApi)
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => []) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { useSessionStore } = await import('@/stores/session')
const { default: OrderDetailDrawer } = await import('@/components/orders/OrderDetailDrawer.vue')

type Step = OrderJobBag['operations'][number]
const step = (over: Partial<Step>): Step => ({
  id: 1,
  jobBagId: 12,
  seq: 0,
  key: 'file',
  kindId: 1,
  name: 'File',
  status: 'pending',
  estimateMinutes: 60,
  requiredLevel: 1,
  waitAfterMinutes: 0,
  leadDays: 0,
  after: [],
  plannedBenchId: 2,
  plannedPersonId: 3,
  plannedStart: null,
  plannedEnd: null,
  finishedAt: null,
  ...over,
})
// Times in December (GMT, the workshop's zone when none is loaded): Mon 8 Dec 2031 14:05 done; Mon 15 Dec 2031 09:30 planned.
const bag = (id: number, number: string, status: string): OrderJobBag => ({
  id,
  number,
  piece: 'Ring',
  routingId: null,
  params: { metal: 'gold-18ct', quantity: 1, stoneCount: 0 } as OrderJobBag['params'],
  status,
  operations: [
    step({
      id: id * 10 + 1,
      jobBagId: id,
      seq: 0,
      key: 'saw',
      name: 'Saw',
      status: 'done',
      finishedAt: '2031-12-08T14:05:00Z',
      plannedStart: '2031-12-08T13:00:00Z',
    }),
    step({ id: id * 10 + 2, jobBagId: id, seq: 1, key: 'file', name: 'File', status: 'ready', plannedStart: '2031-12-15T09:30:00Z' }),
    step({ id: id * 10 + 3, jobBagId: id, seq: 2, key: 'etch', name: 'Etch', status: 'skipped', plannedStart: null }),
  ],
})
const ORDER: OrderDetail = {
  id: 7,
  number: 'MG26-0007',
  customerId: 1,
  customerName: 'Cora Lind',
  customerReference: 'C-001',
  title: 'Two rings',
  dueDate: '2031-12-18',
  promisedDate: null,
  priority: 3,
  status: 'cancelled',
  priceQuotedMinor: 0,
  currency: 'GBP',
  notes: '',
  version: 4,
  jobBags: [bag(1, 'MG26-0007-1', 'in-work')],
}

let w: VueWrapper | undefined
beforeEach(() => {
  setActivePinia(createPinia())
  useSessionStore().user = { id: 1, name: 'Sally', email: 'sales@example.test', role: 'sales', workshopId: 1 } as never
  for (const f of Object.values(ordersApi)) f.mockReset()
  ordersApi.orderCustomersMetal.mockResolvedValue([])
})
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
})

async function openDrawer(order: OrderDetail) {
  ordersApi.getOrder.mockResolvedValue(order)
  w = mount(OrderDetailDrawer, {
    props: { orderId: order.id },
    attachTo: document.body,
    global: {
      plugins: [ElementPlus],
      stubs: {
        ElDrawer: { template: '<div><slot name="header" /><slot /></div>' },
        OrderMoneyPanel: true,
        OrderCostingPanel: true,
        QuoteDialog: true,
        FileGallery: true,
        RouterLink: true,
      },
    },
  })
  await flushPromises()
}
/** The Planned column (the fifth) of one bag's steps, in routing order. */
const planned = (number: string) =>
  [...document.body.querySelectorAll(`[data-bag="${number}"] .el-table__body tr td:nth-child(5)`)].map((e) => e.textContent?.trim().replace(/\s+/g, ' '))

describe('a cancelled order’s steps in its drawer', () => {
  it('when the order is cancelled, then no step shows a planned time: the step done says when, the rest are off the plan', async () => {
    await openDrawer(ORDER)
    expect(planned('MG26-0007-1')).toEqual(['done Mon 8 Dec 2031, 14:05', 'off the plan (order cancelled)', 'skipped'])
    expect(document.body.textContent).not.toContain('Mon 15 Dec 2031')
  })

  it('when the order is cancelled and the forecast still answers for it, then the drawer says it is cancelled, not that it is not planned yet', async () => {
    promiseApi.orderForecast.mockResolvedValueOnce({
      state: 'unplanned',
      plan: null,
      jobBags: [{ jobBagId: 1, number: 'MG26-0007-1', expectedDate: null, state: 'unplanned', why: null, stepsOffPlan: 0 }],
      notBooked: null,
    })
    await openDrawer(ORDER)
    expect(document.body.querySelector('[data-test=order-forecast]')).toBeNull()
    expect(document.body.querySelector('[data-test=order-all-cancelled]')?.textContent?.trim()).toBe(
      'This order is cancelled: nothing of it is planned or expected any more.',
    )
    expect(document.body.textContent).not.toContain('Not planned yet')
  })

  it('when one job bag of an order still in work is cancelled, then only its steps are off the plan; the other bag keeps its planned times', async () => {
    await openDrawer({ ...ORDER, status: 'in-work', jobBags: [bag(1, 'MG26-0007-1', 'cancelled'), bag(2, 'MG26-0007-2', 'in-work')] })
    expect(planned('MG26-0007-1')).toEqual(['done Mon 8 Dec 2031, 14:05', 'off the plan (job bag cancelled)', 'skipped'])
    expect(planned('MG26-0007-2')).toEqual(['Mon 8 Dec 2031, 13:00', 'Mon 15 Dec 2031, 09:30', '—'])
  })
})
