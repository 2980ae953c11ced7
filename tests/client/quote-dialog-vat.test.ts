// The quote dialog under the price: the VAT in it and the VAT number when the workshop is registered, nothing when it is not.
// 20 % is the UK standard rate as HMRC publishes it; £1,850.00 × 20/120 = £308.33, leaving £1,541.67 (hand-worked).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'

const settings = vi.hoisted(() => ({
  value: {
    id: 1,
    name: 'Wrenfield Street Workshop',
    timeZone: 'Europe/London',
    weekPattern: [],
    planningLoad: 0.85,
    address: '',
    phone: '',
    contactEmail: '',
    currency: 'GBP',
    publicUrl: '',
    depositPct: 30,
    quoteValidDays: 30,
    noMetalBeforeDeposit: false,
    vatRegistered: true,
    vatNumber: 'GB 123 4567 89',
    vatRatePct: 20,
    version: 1,
    publicUrlSuggestion: { url: null, reachable: false },
  },
}))
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => settings.value), listClosures: vi.fn(async () => []) }))
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => []) }))
vi.mock('@/api/customers', () => ({ listCustomers: vi.fn(async () => ({ items: [], total: 0, page: 1, pageSize: 20 })), createCustomer: vi.fn() }))
vi.mock('@/api/costing', () => ({ estimateCost: vi.fn(async () => null) }))
vi.mock('@/api/quotes', () => ({ createQuote: vi.fn(), sendQuote: vi.fn(), updateQuote: vi.fn() }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: QuoteDialog } = await import('@/components/money/QuoteDialog.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
})

async function typePrice(text: string) {
  w = mount(QuoteDialog, {
    props: {
      open: true,
      source: {
        kind: 'promise' as const,
        routingId: 1,
        params: { metal: 'gold-18ct' as const, stoneCount: 0, stoneSizeMm: 0, sizeMm: 0, finish: 'polished', quantity: 1 },
        priority: 3,
        piece: 'Sapphire halo ring',
        promisedDate: '',
        confidence: null,
      },
    },
    attachTo: document.body,
    global: { plugins: [ElementPlus, createPinia()] },
  })
  await flushPromises()
  const price = document.body.querySelector<HTMLInputElement>('[data-test=quote-price] input, input[data-test=quote-price]')!
  price.value = text
  price.dispatchEvent(new Event('input'))
  await flushPromises()
}
const vatShown = () => document.body.querySelector('[data-test=quote-vat]')?.textContent?.trim() ?? null

describe('the VAT in a quote’s price', { timeout: 30_000 }, () => {
  it('when the workshop is registered and £1,850 is typed, then the dialog says £308.33 of it is VAT, £1,541.67 before VAT, with the VAT number', async () => {
    settings.value.vatRegistered = true
    await typePrice('1850')
    expect(vatShown()).toBe('of which VAT at 20%: £308.33 (£1,541.67 before VAT) · VAT registration no. GB 123 4567 89')
    // The deposit stays 30 % of the price the customer pays.
    expect(document.body.querySelector('[data-test=quote-deposit-amount]')?.textContent?.trim()).toBe('£555.00 now, £1,295.00 at collection')
  })

  it('when the workshop is not registered, then no VAT line shows', async () => {
    settings.value.vatRegistered = false
    await typePrice('1850')
    expect(vatShown()).toBeNull()
  })
})
