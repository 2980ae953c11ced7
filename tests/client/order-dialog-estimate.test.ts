// The order dialog's estimated cost follows the latest typing: each change asks the costing again, and an answer to an earlier
// request that arrives after a later one's is dropped. The figures are the hand-worked fixture piece of
// tests/client/quote-dialog-costing.test.ts: 457.00 in all; on a price of 1,250.00 it leaves 793.00, 63.44 % → 63.4 %.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Routing } from '@shared/schemas/routing'
import type { CostingEstimate } from '@shared/schemas/costing'

const ROUTING: Routing = {
  id: 11,
  code: 'fixture-pendant',
  name: 'Fixture pendant',
  description: '',
  kind: 'piece',
  learningRate: null,
  resizesRing: false,
  steps: [],
  version: 1,
  warnings: [],
}
const cost = { metalMinor: 30_000, stonesMinor: 0, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 45_700 }
const estimateAt = (priceMinor: number): CostingEstimate => ({
  priceMinor,
  estimate: {
    cost,
    marginMinor: priceMinor ? 79_300 : -45_700,
    marginPct: priceMinor ? 63.4 : null,
    missing: [],
    caveat: 'metal, stones, outside work and labour counted',
  },
  pieces: [
    {
      piece: 'Fixture pendant',
      quantity: 1,
      metalWeightG: 5,
      alloyName: '18 ct yellow gold',
      pricePerGramMinor: 6000,
      priceOn: '2026-12-01',
      labourMinutes: 210,
      customersPiece: false,
      metalNote: null,
      cost,
      missing: [],
    },
  ],
  marginTargetPct: 40,
  suggestedPriceMinor: 76_200,
  currency: 'GBP',
  pricedOn: '2026-12-01',
  customersMetalCaveat: null,
})
const estimateCost = vi.hoisted(() => vi.fn())
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => [ROUTING]) }))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => Promise.reject(new Error('not here'))), listClosures: vi.fn(async () => []) }))
vi.mock('@/api/customers', () => ({ listCustomers: vi.fn(async () => Promise.reject(new Error('not here'))) }))
vi.mock('@/api/costing', () => ({ estimateCost }))
vi.mock('@/api/orders', () => ({ listOrders: vi.fn(), getOrder: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn() }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: OrderTakeDialog } = await import('@/components/orders/OrderTakeDialog.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  estimateCost.mockReset()
})
const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
const text = (test: string) => q(`[data-test=${test}]`)?.textContent?.replace(/\s+/g, ' ').trim() ?? null
/** Past the dialog's pause after typing (400 ms), so the request goes out. */
const pause = async () => {
  await new Promise((r) => setTimeout(r, 450))
  await flushPromises()
}

describe('the order dialog’s estimate while typing', { timeout: 30_000 }, () => {
  it('when the answer to an earlier request comes after the answer to a later one, then the later answer stays on screen', async () => {
    const answers: ((e: CostingEstimate) => void)[] = []
    estimateCost.mockImplementation(() => new Promise<CostingEstimate>((r) => answers.push(r)))
    w = mount(OrderTakeDialog, { props: { open: true }, attachTo: document.body, global: { plugins: [ElementPlus, createPinia()] } })
    await flushPromises()
    // First request: the routing picked, no price yet.
    q('[data-test=order-routing-0] .el-select__wrapper, [data-test=order-routing-0]')!.click()
    await flushPromises()
    ;[...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')].find((e) => e.textContent?.trim() === 'Fixture pendant')!.click()
    await pause()
    expect(estimateCost).toHaveBeenCalledTimes(1)
    expect(estimateCost.mock.calls[0]![0]).toMatchObject({ priceQuotedMinor: 0 })
    // Second request: the price typed while the first is still out.
    const price = q('[data-test=order-price] input, input[data-test=order-price]') as HTMLInputElement
    price.value = '1250'
    price.dispatchEvent(new Event('input'))
    await pause()
    expect(estimateCost).toHaveBeenCalledTimes(2)
    expect(estimateCost.mock.calls[1]![0]).toMatchObject({ priceQuotedMinor: 125_000 })
    // The later request answers first, then the earlier one.
    answers[1]!(estimateAt(125_000))
    await flushPromises()
    expect(text('order-estimated-cost')).toContain('the price quoted leaves £793.00 (63.4 %)')
    answers[0]!(estimateAt(0))
    await flushPromises()
    expect(text('order-estimated-cost')).toContain('Estimated cost £457.00')
    expect(text('order-estimated-cost')).toContain('the price quoted leaves £793.00 (63.4 %)')
  })
})
