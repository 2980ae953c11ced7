// The orders list and an open order's forecast follow the live plan through the live bridge: a plan published, a bar moved or
// booked, a claim, a calendar change reload them (once per burst); drafts, metal, files, quotes and other master data do not.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { OrderDetail, OrderSummary } from '@shared/schemas/order'
import type { OrderForecast } from '@shared/schemas/promise'
import { FakeSocket } from './fake-socket'

const ordersApi = vi.hoisted(() => ({ listOrders: vi.fn(), getOrder: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn() }))
const promiseApi = vi.hoisted(() => ({ orderForecast: vi.fn(), checkPromise: vi.fn(), acceptPromise: vi.fn() }))
const route = vi.hoisted(() => ({ params: {} as Record<string, string> }))
vi.mock('@/api/orders', () => ordersApi)
vi.mock('@/api/promise', () => promiseApi)
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => []) }))
vi.mock('vue-router', () => ({ useRoute: () => route, useRouter: () => ({ push: vi.fn() }) }))
const { LiveChannel } = await import('@/realtime/socket')
const { startLiveBridge } = await import('@/realtime/bridge')
const { default: OrdersView } = await import('@/views/OrdersView.vue')
const { default: OrderDetailDrawer } = await import('@/components/orders/OrderDetailDrawer.vue')

const OTHER = 'tab-other-002'
const row = (expectedDay: string): OrderSummary => ({
  id: 7,
  number: 'MG26-0007',
  customerId: 1,
  customerName: 'Cora Lind',
  title: 'Signet ring',
  dueDate: '2026-12-18',
  promisedDate: null,
  priority: 3,
  status: 'open',
  priceQuotedMinor: 0,
  currency: 'GBP',
  jobBags: 1,
  version: 1,
  expected: { date: expectedDay, risk: 'on-time', margin: '2 working days to spare', offPlan: 'none', done: false, cancelled: false },
})
const detail: OrderDetail = {
  id: 7,
  number: 'MG26-0007',
  customerId: 1,
  customerName: 'Cora Lind',
  customerReference: 'C-001',
  title: 'Signet ring',
  dueDate: '2026-12-18',
  promisedDate: null,
  priority: 3,
  status: 'open',
  priceQuotedMinor: 0,
  currency: 'GBP',
  notes: '',
  version: 1,
  jobBags: [],
}
const forecast = (state: OrderForecast['state']): OrderForecast => ({
  orderId: 7,
  number: 'MG26-0007',
  status: 'open',
  due: '2026-12-18',
  promisedDate: null,
  timeZone: 'Europe/London',
  plan: { id: 3, number: 3, publishedAt: '2026-12-01T09:00:00.000Z' },
  state,
  jobBags: [],
  notBooked: null,
})

/** Each event that changes what the live plan expects of an order, as the server sends it from another tab or a job. */
const PLAN_EVENTS: [string, string, Record<string, unknown>][] = [
  ['a plan is published', 'plan:published', { id: 5 }],
  ['a bar is moved by hand (or a piece booked)', 'plan:changed', { id: 40, operationId: 40, version: 3 }],
  ['a step is claimed at the bench', 'operation:changed', { id: 41, version: 8, status: 'claimed' }],
  ['a job bag is cancelled', 'jobBag:changed', { id: 12, version: 4, status: 'cancelled' }],
  ['a closure is added', 'masterdata:changed', { entity: 'closure', id: 2 }],
  ['the opening hours change', 'masterdata:changed', { entity: 'workshop', id: 1 }],
  ["a bench's downtime changes", 'masterdata:changed', { entity: 'bench', id: 3 }],
  ["someone's leave is recorded", 'masterdata:changed', { entity: 'person', id: 4 }],
]
/** Events that leave the live plan as it is. */
const OTHER_EVENTS: [string, string, Record<string, unknown>][] = [
  ['a planner run saves a draft', 'plan:drafted', { id: 6, runId: 'run-1' }],
  ['a draft is discarded', 'plan:discarded', { id: 6 }],
  ['a customer is edited', 'masterdata:changed', { entity: 'customer', id: 9 }],
  ['a routing is edited', 'masterdata:changed', { entity: 'routing', id: 2 }],
  ['metal is weighed', 'metal:recorded', { id: 30, kind: 'issue', alloyId: 1, jobBagId: 12, refiningLotId: null }],
  ['a photo is added', 'file:added', { id: 31, orderId: 7, jobBagId: null }],
  ['a quote is sent', 'quote:changed', { id: 2, status: 'sent' }],
  ['another order is paid for', 'payment:received', { id: 32, orderId: 8, quoteId: null }],
]

let socket: FakeSocket
let stopBridge: () => void
let seq = 0
let w: VueWrapper | null = null
const fire = (event: string, payload: Record<string, unknown>) => socket.fire(event, { ...payload, seq: ++seq, origin: OTHER })
/** Past the bridge's and the screens' debounce. */
const settle = async () => {
  await vi.advanceTimersByTimeAsync(2500)
  await flushPromises()
}

beforeEach(() => {
  vi.useFakeTimers()
  setActivePinia(createPinia())
  for (const f of [...Object.values(ordersApi), ...Object.values(promiseApi)]) f.mockReset()
  route.params = {}
  socket = new FakeSocket()
  stopBridge = startLiveBridge({ channel: new LiveChannel(socket), clientId: 'tab-self-0001', debounceMs: 0 }).stop
  socket.serverConnects()
})
afterEach(() => {
  w?.unmount()
  w = null
  stopBridge()
  vi.useRealTimers()
})

describe('the orders list', () => {
  const mountList = async () => {
    w = mount(OrdersView, {
      global: { plugins: [ElementPlus], stubs: { OrderDetailDrawer: true, OrderTakeDialog: true } },
    })
    await settle()
    expect(ordersApi.listOrders).toHaveBeenCalledTimes(1)
    ordersApi.listOrders.mockClear()
    return w
  }

  it.each(PLAN_EVENTS)('when %s, then the list asks for its page again, once', async (_what, event, payload) => {
    ordersApi.listOrders.mockResolvedValue({ items: [row('2026-12-16')], total: 1 })
    await mountList()
    fire(event, payload)
    await settle()
    expect(ordersApi.listOrders).toHaveBeenCalledTimes(1)
  })

  it.each(OTHER_EVENTS)('when %s, then the list is left alone', async (_what, event, payload) => {
    ordersApi.listOrders.mockResolvedValue({ items: [row('2026-12-16')], total: 1 })
    await mountList()
    fire(event, payload)
    await settle()
    expect(ordersApi.listOrders).not.toHaveBeenCalled()
  })

  it('when a plan is published that moves the order, then its Expected column shows the new day; a burst of changes asks once', async () => {
    ordersApi.listOrders.mockResolvedValue({ items: [row('2026-12-16')], total: 1 })
    const list = await mountList()
    // 2026-12-16 is a Wednesday, 2026-12-18 a Friday.
    expect(list.get('[data-test=order-expected]').text()).toContain('Wed 16 Dec 2026')
    ordersApi.listOrders.mockResolvedValue({ items: [row('2026-12-18')], total: 1 })
    fire('plan:published', { id: 5 })
    fire('operation:changed', { id: 41, version: 9, status: 'ready' })
    fire('operation:changed', { id: 42, version: 2, status: 'ready' })
    await settle()
    expect(ordersApi.listOrders).toHaveBeenCalledTimes(1)
    expect(list.get('[data-test=order-expected]').text()).toContain('Fri 18 Dec 2026')
  })

  it('when an order is taken or changed in another tab, then the list asks again', async () => {
    ordersApi.listOrders.mockResolvedValue({ items: [], total: 0 })
    await mountList()
    fire('order:created', { id: 8 })
    await settle()
    expect(ordersApi.listOrders).toHaveBeenCalledTimes(1)
  })

  it('when the list has been left, then a change of the plan asks nothing', async () => {
    ordersApi.listOrders.mockResolvedValue({ items: [], total: 0 })
    const list = await mountList()
    list.unmount()
    w = null
    fire('plan:published', { id: 5 })
    await settle()
    expect(ordersApi.listOrders).not.toHaveBeenCalled()
  })
})

describe("an open order's forecast", () => {
  const mountDrawer = async (orderId: number | null = 7) => {
    ordersApi.getOrder.mockResolvedValue(detail)
    promiseApi.orderForecast.mockResolvedValue(forecast('on-time'))
    w = mount(OrderDetailDrawer, {
      props: { orderId },
      global: {
        plugins: [ElementPlus],
        stubs: {
          // The drawer's body in place (no teleport), the panels with loads of their own left out.
          ElDrawer: { template: '<div><slot name="header" /><slot /></div>' },
          OrderMoneyPanel: true,
          OrderCostingPanel: true,
          QuoteDialog: true,
          FileGallery: true,
          RouterLink: true,
        },
      },
    })
    await settle()
    promiseApi.orderForecast.mockClear()
    ordersApi.getOrder.mockClear()
    return w
  }

  it.each(PLAN_EVENTS)('when %s, then the forecast is asked again, and the order itself is not', async (_what, event, payload) => {
    await mountDrawer()
    fire(event, payload)
    await settle()
    expect(promiseApi.orderForecast).toHaveBeenCalledTimes(1)
    expect(promiseApi.orderForecast).toHaveBeenCalledWith(7)
    expect(ordersApi.getOrder).not.toHaveBeenCalled()
  })

  it.each(OTHER_EVENTS)('when %s, then the forecast is left alone', async (_what, event, payload) => {
    await mountDrawer()
    fire(event, payload)
    await settle()
    expect(promiseApi.orderForecast).not.toHaveBeenCalled()
  })

  it('when the order is changed or paid for, then its forecast (due day, a deposit that frees held work) is asked again', async () => {
    await mountDrawer()
    fire('order:updated', { id: 7, version: 2 })
    await settle()
    expect(promiseApi.orderForecast).toHaveBeenCalledTimes(1)
    fire('payment:received', { id: 33, orderId: 7, quoteId: null })
    await settle()
    expect(promiseApi.orderForecast).toHaveBeenCalledTimes(2)
  })

  it('when the plan changes the forecast, then the drawer shows the new state', async () => {
    const drawer = await mountDrawer()
    expect(drawer.get('[data-test=order-forecast]').text()).toContain('On time')
    promiseApi.orderForecast.mockResolvedValue(forecast('late'))
    fire('plan:changed', { id: 40, operationId: 40, version: 5 })
    await settle()
    expect(drawer.get('[data-test=order-forecast]').text()).toContain('Will be late')
  })

  it('when no order is open, then a change of the plan asks nothing', async () => {
    await mountDrawer(null)
    fire('plan:published', { id: 5 })
    await settle()
    expect(promiseApi.orderForecast).not.toHaveBeenCalled()
  })
})

describe("an open order's job bag steps", () => {
  const op = (id: number, seq: number, name: string, status: string): OrderDetail['jobBags'][number]['operations'][number] => ({
    id,
    jobBagId: 12,
    seq,
    key: `s${seq}`,
    kindId: 1,
    name,
    status,
    estimateMinutes: 60,
    requiredLevel: 1,
    waitAfterMinutes: 0,
    leadDays: 0,
    after: [],
    plannedBenchId: null,
    plannedPersonId: null,
    plannedStart: null,
    plannedEnd: null,
    finishedAt: null,
  })
  const withSteps = (saw: string, file: string): OrderDetail => ({
    ...detail,
    jobBags: [
      {
        id: 12,
        number: 'MG26-0007-1',
        piece: 'Signet ring',
        routingId: null,
        params: { metal: 'gold-18ct', stoneCount: 0, stoneSizeMm: 0, sizeMm: 0, finish: 'polished', quantity: 1 },
        status: 'in-work',
        operations: [op(41, 0, 'Saw the shank', saw), op(42, 1, 'File the shank', file)],
      },
    ],
  })
  const states = (drawer: VueWrapper) =>
    drawer.findAll('.ops .el-table__body tr').map((tr) =>
      tr
        .findAll('td')
        .map((td) => td.text().trim())
        .filter((_, i) => i === 1 || i === 5),
    )
  const mountDrawer = async () => {
    ordersApi.getOrder.mockResolvedValue(withSteps('ready', 'pending'))
    promiseApi.orderForecast.mockResolvedValue(forecast('on-time'))
    w = mount(OrderDetailDrawer, {
      props: { orderId: 7 },
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
    await settle()
    ordersApi.getOrder.mockClear()
    return w
  }

  it('when a bench worker starts a step and then finishes it, then the drawer shows each state without being opened again', async () => {
    const drawer = await mountDrawer()
    expect(states(drawer)).toEqual([
      [expect.stringContaining('Saw the shank'), 'ready'],
      [expect.stringContaining('File the shank'), 'pending'],
    ])
    ordersApi.getOrder.mockResolvedValue(withSteps('running', 'pending'))
    fire('operation:changed', { id: 41, version: 9, status: 'running' })
    await settle()
    expect(ordersApi.getOrder).toHaveBeenCalledWith(7)
    expect(states(drawer).map((r) => r[1])).toEqual(['running', 'pending'])
    ordersApi.getOrder.mockResolvedValue(withSteps('done', 'ready'))
    fire('operation:changed', { id: 41, version: 10, status: 'done' })
    fire('jobBag:changed', { id: 12, version: 5, status: 'in-work' })
    await settle()
    expect(states(drawer).map((r) => r[1])).toEqual(['done', 'ready'])
  })

  it('when a step is started while the office is changing the order’s terms, then the steps change and the terms typed stay', async () => {
    const drawer = await mountDrawer()
    const priority = drawer.findAllComponents({ name: 'ElSelect' })[1]!.vm as unknown as { $emit: (e: string, v: number) => void }
    priority.$emit('update:modelValue', 5)
    await flushPromises()
    ordersApi.getOrder.mockResolvedValue({ ...withSteps('running', 'pending'), priority: 1, version: 2 })
    fire('operation:changed', { id: 41, version: 9, status: 'running' })
    await settle()
    expect(states(drawer).map((r) => r[1])).toEqual(['running', 'pending'])
    expect(drawer.findAllComponents({ name: 'ElSelect' })[1]!.props('modelValue')).toBe(5)
  })

  it('when a step of another order changes, then the drawer asks nothing', async () => {
    await mountDrawer()
    fire('operation:changed', { id: 99, version: 3, status: 'running' })
    fire('jobBag:changed', { id: 30, version: 2, status: 'in-work' })
    await settle()
    expect(ordersApi.getOrder).not.toHaveBeenCalled()
  })

  it('when an answer for the steps comes after a newer one, then the newer states stay', async () => {
    const drawer = await mountDrawer()
    let answerOld: (d: OrderDetail) => void = () => undefined
    ordersApi.getOrder.mockReturnValueOnce(new Promise<OrderDetail>((r) => (answerOld = r)))
    fire('operation:changed', { id: 41, version: 9, status: 'running' })
    await settle()
    ordersApi.getOrder.mockResolvedValueOnce(withSteps('done', 'ready'))
    fire('operation:changed', { id: 41, version: 10, status: 'done' })
    await settle()
    answerOld(withSteps('running', 'pending'))
    await settle()
    expect(states(drawer).map((r) => r[1])).toEqual(['done', 'ready'])
  })
})

// The table the screens rely on: 'live-plan' comes from these events and no others (a new event must choose).
describe('live-plan key', () => {
  it('when any event arrives, then only the events that change the live plan invalidate it', async () => {
    const { LIVE_TABLE } = await import('@/realtime/bridge')
    const { useLiveStore } = await import('@/stores/live')
    const hits: string[] = []
    let current = ''
    useLiveStore().watchKeys(
      () => ['live-plan'],
      () => hits.push(current),
    )
    const samples: Record<string, Record<string, unknown>> = Object.fromEntries([...PLAN_EVENTS, ...OTHER_EVENTS].map(([, e, p]) => [e, p]))
    for (const event of Object.keys(LIVE_TABLE)) {
      current = event
      fire(event, event === 'masterdata:changed' ? { entity: 'closure', id: 2 } : { id: 50 + seq, runId: 'run-9', ...samples[event] })
    }
    await settle()
    expect(new Set(hits)).toEqual(new Set(['plan:published', 'plan:changed', 'operation:changed', 'jobBag:changed', 'masterdata:changed']))
  })
})
