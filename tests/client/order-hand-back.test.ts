// Cancelling an order that holds the customer's own piece: the drawer asks the office to hand it back, offering the weight held
// (6.180 g of 18 ct here, as the stock holds it), and sends the weight handed over with the cancellation; an order holding nothing
// of theirs is cancelled as before, and keeping the order sends nothing.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { OrderDetail } from '@shared/schemas/order'
import type { HeldPiece } from '@shared/schemas/metal'

const ordersApi = vi.hoisted(() => ({ listOrders: vi.fn(), getOrder: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn(), orderCustomersMetal: vi.fn() }))
vi.mock('@/api/orders', () => ordersApi)
vi.mock('@/api/promise', () => ({ orderForecast: vi.fn(async () => Promise.reject(new Error('not here'))) }))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => []) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { useSessionStore } = await import('@/stores/session')
const { default: OrderDetailDrawer } = await import('@/components/orders/OrderDetailDrawer.vue')

const ORDER: OrderDetail = {
  id: 7,
  number: 'MG26-0007',
  customerId: 1,
  customerName: 'Cora Lind',
  customerReference: 'C-001',
  title: 'Claw retip',
  dueDate: '2031-12-18',
  promisedDate: null,
  priority: 3,
  status: 'in-work',
  priceQuotedMinor: 0,
  currency: 'GBP',
  notes: '',
  version: 4,
  jobBags: [],
}
const RING: HeldPiece = { jobBagId: 12, number: 'MG26-0007-1', piece: 'Ring', alloyId: 3, alloyName: '18 ct yellow gold', weightMg: 6180, weightG: 6.18 }

let w: VueWrapper | undefined
beforeEach(() => {
  setActivePinia(createPinia())
  useSessionStore().user = { id: 1, name: 'Sally', email: 'sales@example.test', role: 'sales', workshopId: 1 } as never
  for (const f of Object.values(ordersApi)) f.mockReset()
  ordersApi.getOrder.mockResolvedValue(ORDER)
  ordersApi.updateOrder.mockImplementation(async (_id: number, body: { status?: string }) => ({ ...ORDER, ...body, version: 5 }))
})
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
})

const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
async function openDrawer() {
  w = mount(OrderDetailDrawer, {
    props: { orderId: 7 },
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
/** Chooses Cancelled in the status field and presses Save, as the office does. */
async function cancelAndSave() {
  const status = w!.findAllComponents({ name: 'ElSelect' })[0]!.vm as unknown as { $emit: (e: string, v: string) => void }
  status.$emit('update:modelValue', 'cancelled')
  await flushPromises()
  const save = [...document.body.querySelectorAll<HTMLButtonElement>('.terms button')].find((b) => b.textContent?.trim() === 'Save')!
  save.click()
  await flushPromises()
  // The dialog comes in with its transition.
  await new Promise((r) => setTimeout(r, 50))
  await flushPromises()
}
const weightInput = () => q('[data-test=hand-back-g-0] input, input[data-test=hand-back-g-0]') as HTMLInputElement | null

describe('cancelling an order that holds the customer’s piece', () => {
  it('when the office cancels it, then the dialog offers the ring at the 6.180 g held and the cancellation hands it back at that weight', async () => {
    ordersApi.orderCustomersMetal.mockResolvedValue([RING])
    await openDrawer()
    await cancelAndSave()
    expect(ordersApi.orderCustomersMetal).toHaveBeenCalledWith(7)
    expect(ordersApi.updateOrder).not.toHaveBeenCalled()
    expect(q('[data-test=hand-back-dialog]')?.textContent).toContain('Order MG26-0007 holds the customer’s own metal')
    expect(q('[data-test=hand-back-piece]')?.textContent?.replace(/\s+/g, ' ')).toContain('MG26-0007-1 · Ring 18 ct yellow gold · held 6.180 g')
    expect(weightInput()?.value).toBe('6.180')
    q('[data-test=hand-back-confirm]')!.click()
    await flushPromises()
    expect(ordersApi.updateOrder).toHaveBeenCalledTimes(1)
    expect(ordersApi.updateOrder).toHaveBeenCalledWith(
      7,
      expect.objectContaining({ status: 'cancelled', version: 4, handBack: [{ jobBagId: 12, alloyId: 3, weightG: 6.18 }] }),
    )
  })

  it('when the ring is weighed at the counter at 6.175 g, then that weight is handed back', async () => {
    ordersApi.orderCustomersMetal.mockResolvedValue([RING])
    await openDrawer()
    await cancelAndSave()
    const input = weightInput()!
    input.value = '6.175'
    input.dispatchEvent(new Event('input'))
    input.dispatchEvent(new Event('change'))
    await flushPromises()
    q('[data-test=hand-back-confirm]')!.click()
    await flushPromises()
    expect(ordersApi.updateOrder).toHaveBeenCalledWith(
      7,
      expect.objectContaining({ status: 'cancelled', handBack: [{ jobBagId: 12, alloyId: 3, weightG: 6.175 }] }),
    )
  })

  it('when the weight is cleared, then the dialog says under it what is wrong and nothing is sent', async () => {
    ordersApi.orderCustomersMetal.mockResolvedValue([RING])
    await openDrawer()
    await cancelAndSave()
    const input = weightInput()!
    input.value = ''
    input.dispatchEvent(new Event('input'))
    input.dispatchEvent(new Event('change'))
    await flushPromises()
    q('[data-test=hand-back-confirm]')!.click()
    await flushPromises()
    await new Promise((r) => setTimeout(r, 100))
    await flushPromises()
    expect(q('[data-test=hand-back-0] .el-form-item__error')?.textContent?.trim()).toMatch(/weight in grams/i)
    expect(ordersApi.updateOrder).not.toHaveBeenCalled()
  })

  it('when the office keeps the order, then nothing is sent', async () => {
    ordersApi.orderCustomersMetal.mockResolvedValue([RING])
    await openDrawer()
    await cancelAndSave()
    q('[data-test=hand-back-keep]')!.click()
    await flushPromises()
    expect(ordersApi.updateOrder).not.toHaveBeenCalled()
  })

  it('when the order holds nothing of the customer’s, then it is cancelled at once with no hand-back', async () => {
    ordersApi.orderCustomersMetal.mockResolvedValue([])
    await openDrawer()
    await cancelAndSave()
    expect(ordersApi.orderCustomersMetal).toHaveBeenCalledWith(7)
    expect(q('[data-test=hand-back-piece]')).toBeNull()
    expect(ordersApi.updateOrder).toHaveBeenCalledTimes(1)
    expect(ordersApi.updateOrder.mock.calls[0]![1]).not.toHaveProperty('handBack')
    expect(ordersApi.updateOrder.mock.calls[0]![1]).toMatchObject({ status: 'cancelled' })
  })

  it('when a cancelled order still holds the ring (back from the bench after it was cancelled), then the drawer says so and hands it back', async () => {
    ordersApi.getOrder.mockResolvedValue({ ...ORDER, status: 'cancelled' })
    ordersApi.orderCustomersMetal.mockResolvedValue([RING])
    await openDrawer()
    expect(q('[data-test=order-held-pieces]')?.textContent?.replace(/\s+/g, ' ')).toContain('The customer’s own metal is still here (MG26-0007-1, 6.180 g)')
    q('[data-test=order-hand-back]')!.click()
    await flushPromises()
    await new Promise((r) => setTimeout(r, 50))
    expect(q('[data-test=hand-back-dialog]')?.textContent).toContain('Order MG26-0007 is cancelled and still holds the customer’s own metal')
    expect(q('[data-test=hand-back-confirm]')?.textContent?.trim()).toBe('Record the hand-back')
    q('[data-test=hand-back-confirm]')!.click()
    await flushPromises()
    expect(ordersApi.updateOrder).toHaveBeenCalledWith(
      7,
      expect.objectContaining({ status: 'cancelled', handBack: [{ jobBagId: 12, alloyId: 3, weightG: 6.18 }] }),
    )
  })
})
