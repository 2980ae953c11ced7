// The quote and order dialogs' number fields: a figure typed beyond its limits stays as typed and is refused under its field
// (never cut to the limit on leaving the field and sent so), and nothing is sent. The limits are the shared schemas' (a deposit
// is a share of the price, 0 to 100 %; an order's piece: at most 500 pieces, 2000 stones, stones of 30 mm, a size of 300 mm).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Routing } from '@shared/schemas/routing'
import { typeInto } from '../setup/form-fields'

const ROUTINGS: Routing[] = [
  { id: 1, code: 'signet', name: 'Signet ring', description: '', kind: 'piece', learningRate: null, resizesRing: false, steps: [], version: 1, warnings: [] },
]
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => ROUTINGS) }))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
// No workshop settings: the dialogs fall back to Europe/London, GBP and quotes standing 30 days.
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => Promise.reject(new Error('not here'))), listClosures: vi.fn(async () => []) }))
vi.mock('@/api/customers', () => ({ listCustomers: vi.fn(async () => ({ items: [], total: 0, page: 1, pageSize: 20 })), createCustomer: vi.fn() }))
vi.mock('@/api/costing', () => ({ estimateCost: vi.fn(async () => null) }))
vi.mock('@/api/orders', () => ({ listOrders: vi.fn(), getOrder: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn() }))
vi.mock('@/api/quotes', () => ({ createQuote: vi.fn(), sendQuote: vi.fn(), updateQuote: vi.fn() }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: QuoteDialog } = await import('@/components/money/QuoteDialog.vue')
const { default: OrderTakeDialog } = await import('@/components/orders/OrderTakeDialog.vue')
const quotesApi = await import('@/api/quotes')
const ordersApi = await import('@/api/orders')

/** A day `days` from today in Europe/London, written by Intl (not the dialogs' own date code). */
const dayFromToday = (days: number) => new Intl.DateTimeFormat('en-CA', { timeZone: 'Europe/London' }).format(new Date(Date.now() + days * 86_400_000))

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  vi.clearAllMocks()
})

/** The form items show their reasons after a short debounce (Element Plus: 100 ms). */
const shown = async () => {
  await flushPromises()
  await new Promise((r) => setTimeout(r, 150))
  await flushPromises()
}
const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
/** Each form item's label with the reasons shown under it (its own, and an amount or customer field's). */
function reasons(): Record<string, string[]> {
  const out: Record<string, string[]> = {}
  for (const item of document.body.querySelectorAll('.el-form-item')) {
    const said = [...item.querySelectorAll('.el-form-item__error, .mmf__problem, .customer-pick__problem')].map((e) => e.textContent?.trim() ?? '')
    if (said.length) out[item.querySelector('.el-form-item__label')?.textContent?.trim() ?? '?'] = said
  }
  return out
}

const promiseSource = (promisedDate: string) => ({
  kind: 'promise' as const,
  routingId: 1,
  params: { metal: 'gold-18ct' as const, stoneCount: 0, stoneSizeMm: 0, sizeMm: 0, finish: 'polished', quantity: 1 },
  priority: 3,
  piece: 'Bezel-set solitaire ring',
  promisedDate,
  confidence: null,
})
async function openQuote(promisedDate: string) {
  w = mount(QuoteDialog, {
    props: { open: true, source: promiseSource(promisedDate) },
    attachTo: document.body,
    global: { plugins: [ElementPlus, createPinia()] },
  })
  await flushPromises()
}

describe('the quote dialog', () => {
  it('when a deposit of 120 % is typed and the quote saved, then 120 stays, the field says 0 to 100 %, and nothing is sent', async () => {
    await openQuote(dayFromToday(12))
    const deposit = await typeInto('quote-deposit-pct', '120')
    expect(deposit.value).toBe('120')
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(deposit.value).toBe('120')
    expect(reasons()['Deposit asked (% of the price)']).toEqual(['Must be 0 to 100 % of the price'])
    expect(quotesApi.createQuote).not.toHaveBeenCalled()
  })

  it('when 2400 stones are typed on a stone row, then 2400 stays (a quote sets no upper limit on stones)', async () => {
    await openQuote(dayFromToday(12))
    q('[data-test=quote-stone-add]')!.click()
    await flushPromises()
    const count = await typeInto('quote-stone-count-0', '2400')
    expect(count.value).toBe('2400')
  })
})

describe('the take-an-order dialog', () => {
  async function openOrder() {
    w = mount(OrderTakeDialog, { props: { open: true }, attachTo: document.body, global: { plugins: [ElementPlus, createPinia()] } })
    await flushPromises()
  }

  it('when 600 pieces are typed and the order saved, then 600 stays, the field says at most 500, and no order is taken', async () => {
    await openOrder()
    const qty = await typeInto('order-quantity', '600')
    expect(qty.value).toBe('600')
    q('[data-test=order-save]')!.click()
    await shown()
    expect(qty.value).toBe('600')
    expect(reasons().Quantity).toEqual(['Must be at most 500'])
    expect(ordersApi.createOrder).not.toHaveBeenCalled()
  })

  it('when a size of 320 mm is typed, then it stays and is refused under its field', async () => {
    await openOrder()
    const size = await typeInto('order-size', '320')
    expect(size.value).toBe('320.0')
    q('[data-test=order-save]')!.click()
    await shown()
    expect(reasons()['Size (mm)']).toEqual(['Must be at most 300 mm'])
    expect(ordersApi.createOrder).not.toHaveBeenCalled()
  })
})
