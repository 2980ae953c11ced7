// The order form's metal weight on a repair: on the customer's own piece it asks only for the metal the workshop adds, says their
// piece is not charged, and the estimate beside it — and the order drawer's costing — say how each such piece's metal was counted.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Routing } from '@shared/schemas/routing'
import type { CostingEstimate, OrderCosting } from '@shared/schemas/costing'

const routing = (id: number, name: string, kind: Routing['kind'], resizesRing = false): Routing => ({
  id,
  code: name.toLowerCase().replace(/ /g, '-'),
  name,
  description: '',
  kind,
  learningRate: null,
  resizesRing,
  steps: [],
  version: 1,
  warnings: [],
})
const ROUTINGS = [
  routing(1, 'Signet ring', 'piece'),
  routing(2, 'Claw retip', 'repair'),
  routing(3, 'Ring resize', 'repair', true),
  // The workshop's own names: a resize whose code never says so, and a chain repair whose code does.
  routing(4, 'Shank sizing', 'repair', true),
  routing(5, 'Chain resize links', 'repair'),
]
const zero = { metalMinor: 0, stonesMinor: 0, outsideMinor: 0, labourMinor: 0, totalMinor: 0 }
/** An answer as the server gives it for one repair piece: the note and the caveat come from the server, the dialog only shows them. */
const ESTIMATE: CostingEstimate = {
  priceMinor: 0,
  estimate: { cost: zero, marginMinor: 0, marginPct: null, missing: [], caveat: 'metal, stones, outside work and labour counted' },
  pieces: [
    {
      piece: 'Claw retip',
      quantity: 1,
      metalWeightG: 0.4,
      alloyName: '18 ct yellow gold',
      pricePerGramMinor: 6000,
      priceOn: '2026-12-01',
      labourMinutes: 30,
      customersPiece: true,
      metalNote: 'customer’s own piece: not charged; metal added 0.4 g',
      cost: zero,
      missing: [],
    },
  ],
  marginTargetPct: 40,
  suggestedPriceMinor: 0,
  currency: 'GBP',
  pricedOn: '2026-12-01',
  customersMetalCaveat: 'the loss of the customer’s own metal is not in the estimate: it shows at actual once their piece is weighed',
}
/** The same piece on an order taken from it, nothing recorded yet. */
const ORDER_COSTING: OrderCosting = {
  ...ESTIMATE,
  orderId: 7,
  orderNumber: 'MG26-0007',
  actual: ESTIMATE.estimate,
  metalAsEstimatedMinor: 0,
  customerMetalLossG: 0,
  workRecorded: false,
}
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => ROUTINGS) }))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => Promise.reject(new Error('not here'))), listClosures: vi.fn(async () => []) }))
vi.mock('@/api/customers', () => ({ listCustomers: vi.fn(async () => Promise.reject(new Error('not here'))) }))
vi.mock('@/api/costing', () => ({ estimateCost: vi.fn(async () => ESTIMATE), getOrderCosting: vi.fn(async () => ORDER_COSTING) }))
vi.mock('@/api/orders', () => ({ listOrders: vi.fn(), getOrder: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn() }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: OrderTakeDialog } = await import('@/components/orders/OrderTakeDialog.vue')
const { default: OrderCostingPanel } = await import('@/components/orders/OrderCostingPanel.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
})

async function openDialog() {
  w = mount(OrderTakeDialog, { props: { open: true }, attachTo: document.body, global: { plugins: [ElementPlus, createPinia()] } })
  await flushPromises()
}
const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
/** The label of the form item holding the first piece's weight field. */
const label = () => q('[data-test=order-metal-g-0]')?.closest('.el-form-item')?.querySelector('.el-form-item__label')?.textContent?.trim()
const help = () => q('[data-test=order-metal-help-0]')?.textContent?.trim() ?? null

/** Picks the first piece's routing as a person does: opens the list and clicks the routing's name. */
async function pickRouting(name: string) {
  q('[data-test=order-routing-0] .el-select__wrapper, [data-test=order-routing-0]')!.click()
  await flushPromises()
  const item = [...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')].find((e) => e.textContent?.trim() === name)
  expect(item, `a routing named ${name} in the list`).toBeTruthy()
  item!.click()
  await flushPromises()
}

describe('the metal weight on a repair', () => {
  it('when the routing picked is a repair, then the field asks for the metal added and says the customer’s piece is not charged; a new piece asks as before', async () => {
    await openDialog()
    expect(label()).toBe('Metal in one piece (g, typical)')
    await pickRouting('Claw retip')
    expect(label()).toBe('Metal added to their piece (g, typical)')
    expect(help()).toBe('The customer’s own piece is not charged; enter only the metal you add.')
    await pickRouting('Signet ring')
    expect(label()).toBe('Metal in one piece (g, typical)')
    expect(help()).toBeNull()
  })

  it('when the estimate has a repair piece, then the dialog shows its note and that the loss of the customer’s metal is not in it', async () => {
    await openDialog()
    await pickRouting('Claw retip')
    // The estimate is asked for 400 ms after the form stops changing.
    await new Promise((r) => setTimeout(r, 500))
    await flushPromises()
    expect([...document.body.querySelectorAll('[data-test=order-metal-note]')].map((e) => e.textContent?.trim())).toEqual([
      'Claw retip — customer’s own piece: not charged; metal added 0.4 g',
    ])
    expect(q('[data-test=order-customers-metal]')?.textContent?.trim()).toBe(
      'the loss of the customer’s own metal is not in the estimate: it shows at actual once their piece is weighed',
    )
  })
})

describe('a metal weight out of range', () => {
  it('when a negative weight is typed, then it stays as typed and saving says why under the field; nothing is sent', async () => {
    const { createOrder } = await import('@/api/orders')
    await openDialog()
    await pickRouting('Claw retip')
    const box = q('[data-test=order-metal-g-0]')!
    const input = (box.tagName === 'INPUT' ? box : box.querySelector('input')) as HTMLInputElement
    input.value = '-0.4'
    input.dispatchEvent(new Event('input'))
    input.dispatchEvent(new Event('change'))
    input.dispatchEvent(new Event('blur'))
    await flushPromises()
    // Not turned into the smallest weight allowed without a word (it was 0.01 g before).
    expect(input.value).toBe('-0.40')
    q('[data-test=order-save]')!.click()
    await flushPromises()
    // The reason comes in with the field's transition.
    await new Promise((r) => setTimeout(r, 100))
    await flushPromises()
    expect(q('[data-test=order-metal-0] .el-form-item__error')?.textContent?.trim()).toMatch(/more than 0 g/i)
    expect(vi.mocked(createOrder)).not.toHaveBeenCalled()
  })
})

describe('ring sizes typed for a resize', () => {
  it('when the routing picked says it resizes a ring, then the order asks for both sizes, whatever its code says', async () => {
    await openDialog()
    const asks = () =>
      !!q('[data-test=resize-from-0-value], input[data-test=resize-from-0-value]') && !!q('[data-test=resize-to-0-value], input[data-test=resize-to-0-value]')
    await pickRouting('Shank sizing')
    expect(asks()).toBe(true)
    await pickRouting('Chain resize links')
    expect(asks()).toBe(false)
    await pickRouting('Ring resize')
    expect(asks()).toBe(true)
  })

  it('when another routing is picked after sizes were typed for a resize, then the sizes are not sent with the piece', async () => {
    const { estimateCost } = await import('@/api/costing')
    await openDialog()
    await pickRouting('Ring resize')
    for (const [id, size] of [
      ['resize-from-0', 'M'],
      ['resize-to-0', 'P'],
    ] as const) {
      const input = q(`input[data-test=${id}-value], [data-test=${id}-value] input`) as HTMLInputElement
      input.value = size
      input.dispatchEvent(new Event('input'))
    }
    await flushPromises()
    await pickRouting('Signet ring')
    // The estimate is asked for 400 ms after the form stops changing; the last request is for the signet ring.
    await new Promise((r) => setTimeout(r, 500))
    await flushPromises()
    const calls = vi.mocked(estimateCost).mock.calls
    const last = calls[calls.length - 1]![0] as { pieces: { routingId: number; params: Record<string, unknown> }[] }
    expect(last.pieces[0]!.routingId).toBe(1)
    expect(last.pieces[0]!.params).not.toHaveProperty('resizeFrom')
    expect(last.pieces[0]!.params).not.toHaveProperty('resizeTo')
  })
})

describe('an order’s costing with a repair piece', () => {
  it('when the drawer shows the costing, then it names the piece’s note and says the loss of the customer’s metal is not in the estimate', async () => {
    w = mount(OrderCostingPanel, {
      props: { orderId: 7, priceMinor: 0, jobBagIds: [] },
      attachTo: document.body,
      global: { plugins: [ElementPlus, createPinia()] },
    })
    await flushPromises()
    expect(w.findAll('[data-test=costing-piece-metal]').map((e) => e.text())).toEqual(['Claw retip — customer’s own piece: not charged; metal added 0.4 g'])
    expect(w.find('[data-test=costing-customers-metal-estimate]').text()).toBe(
      'The loss of the customer’s own metal is not in the estimate: it shows at actual once their piece is weighed.',
    )
  })
})
