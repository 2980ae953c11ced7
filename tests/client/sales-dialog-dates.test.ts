// The quote and order dialogs before sending: every missing field said at once, one reason per field, an empty date said as
// such, days gone refused under their field, and a quote's valid-until day proposed no later than its promised date. Their
// number fields: a figure typed beyond its limits stays as typed and is refused under its field (never cut to the limit on
// leaving the field and sent so), and nothing is sent. The limits are the shared schemas' (a deposit is a share of the price,
// 0 to 100 %, the rule the workshop's default deposit keeps; an order's piece: at most 500 pieces, 2000 stones, stones of 30 mm,
// a size of 300 mm). While a quote's deposit % will not do, the line under it gives the reason, never a deposit above the price
// or a balance below zero.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Routing } from '@shared/schemas/routing'
import { workshopMoneyRulesInput } from '@shared/schemas/calendar'
import { typeInto, typeIntoInput } from '../setup/form-fields'

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
/** The same day as the date pickers show it ("D MMM YYYY", e.g. "5 Dec 2026"). */
const shownDay = (iso: string) =>
  new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' })
    .format(new Date(`${iso}T12:00:00Z`))
    .replace('Sept', 'Sep')

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
/** Sets a date picker as a person picking a day does (the picker hands on YYYY-MM-DD). */
async function pickDate(index: number, iso: string) {
  w!.findAllComponents({ name: 'ElDatePicker' })[index]!.vm.$emit('update:modelValue', iso)
  await flushPromises()
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
const validUntilShown = () => (q('[data-test=quote-valid] input') as HTMLInputElement).value

describe('the quote dialog', () => {
  it('when an empty quote is saved, then the missing customer and price are both said at once', async () => {
    await openQuote(dayFromToday(12))
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(reasons()).toEqual({ Customer: ['Choose the customer or add a new one'], Price: ['Type the price, e.g. 640 or 640.50'] })
    expect(quotesApi.createQuote).not.toHaveBeenCalled()
  })

  it('when −50 is typed as the price and saved, then one reason shows under it', async () => {
    await openQuote(dayFromToday(12))
    const price = q('[data-test=quote-price] input, input[data-test=quote-price]') as HTMLInputElement
    price.value = '-50'
    price.dispatchEvent(new Event('input'))
    await flushPromises()
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(reasons().Price).toEqual(['Must be 0 or more'])
  })

  it('when the promised date is a day gone, then it is refused under the field and nothing is sent', async () => {
    await openQuote(dayFromToday(-1))
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(reasons()['Promised date']).toEqual(['Must be today or later'])
    expect(quotesApi.createQuote).not.toHaveBeenCalled()
  })

  it('when the promise is 12 days away, then the quote is proposed valid until that day, not for the workshop’s 30 days; a later day picked is refused', async () => {
    await openQuote(dayFromToday(12))
    expect(validUntilShown()).toBe(shownDay(dayFromToday(12)))
    // Promised further away than 30 days: the 30 days stand; the proposal follows the promised date as it is changed.
    await pickDate(0, dayFromToday(90))
    expect(validUntilShown()).toBe(shownDay(dayFromToday(30)))
    await pickDate(0, dayFromToday(20))
    expect(validUntilShown()).toBe(shownDay(dayFromToday(20)))
    await pickDate(1, dayFromToday(25))
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(reasons()['Valid until']).toEqual(['Must not be after the promised date (a customer accepting later would get an order promised for a day gone)'])
  })
})

describe('the take-an-order dialog', () => {
  async function openOrder() {
    w = mount(OrderTakeDialog, { props: { open: true }, attachTo: document.body, global: { plugins: [ElementPlus, createPinia()] } })
    await flushPromises()
  }

  it('when it is saved empty, then the due date says it is required, not how a date is written', async () => {
    await openOrder()
    q('[data-test=order-save]')!.click()
    await shown()
    expect(reasons()['Due (the customer needs it by)']).toEqual(['Is required'])
  })

  it('when the due and promised dates are days gone, then each is refused under its field and no order is taken', async () => {
    await openOrder()
    await pickDate(0, dayFromToday(-1))
    await pickDate(1, dayFromToday(-2))
    q('[data-test=order-save]')!.click()
    await shown()
    const r = reasons()
    expect(r['Due (the customer needs it by)']).toEqual(['Must be today or later'])
    expect(r['Promised date (optional)']).toEqual(['Must be today or later'])
    expect(ordersApi.createOrder).not.toHaveBeenCalled()
  })
})

/** What the workshop settings say of a default deposit of 120 %: the shared rule's reason, as a sentence. */
const settingsReasonFor120 = () => {
  const r = workshopMoneyRulesInput.shape.depositPct.safeParse(120)
  const why = r.success ? '' : r.error.issues[0]!.message
  return why.charAt(0).toUpperCase() + why.slice(1)
}
const depositLine = () => q('[data-test=quote-deposit-amount]')?.textContent?.trim() ?? null

describe('the quote dialog’s number fields', () => {
  it('when a deposit of 120 % is typed and the quote saved, then 120 stays, the field gives the settings’ own reason for it, and nothing is sent', async () => {
    await openQuote(dayFromToday(12))
    const deposit = await typeInto('quote-deposit-pct', '120')
    expect(deposit.value).toBe('120')
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(deposit.value).toBe('120')
    expect(settingsReasonFor120()).toBe('Must be 0 to 100')
    expect(reasons()['Deposit asked (% of the price)']).toEqual([settingsReasonFor120()])
    expect(quotesApi.createQuote).not.toHaveBeenCalled()
  })

  it('when £1,500.00 is quoted and a deposit of 120 % is typed, then the line under it gives the reason, not £1,800.00 now and −£300.00 at collection', async () => {
    await openQuote(dayFromToday(12))
    await typeIntoInput('input[data-test=quote-price]', '1500')
    await typeInto('quote-deposit-pct', '120')
    expect(depositLine()).toBe('Must be 0 to 100')
    expect(depositLine()).not.toMatch(/£|−/)
    // Emptied, it is required; no figures either (not £0.00 now and the whole price at collection).
    await typeInto('quote-deposit-pct', '')
    expect(depositLine()).toBe('Is required')
    // Back within 0–100 %, the figures return: 40 % of £1,500.00 is £600.00, leaving £900.00 (hand-worked); a quote's deposit
    // may be a share with decimals, 12.5 % is £187.50, leaving £1,312.50.
    await typeInto('quote-deposit-pct', '40')
    expect(depositLine()).toBe('£600.00 now, £900.00 at collection')
    await typeInto('quote-deposit-pct', '12.5')
    expect(depositLine()).toBe('£187.50 now, £1,312.50 at collection')
    q('[data-test=quote-save]')!.click()
    await shown()
    expect(reasons()['Deposit asked (% of the price)']).toBeUndefined()
  })

  it('when 2400 stones are typed on a stone row, then 2400 stays (a quote sets no upper limit on stones)', async () => {
    await openQuote(dayFromToday(12))
    q('[data-test=quote-stone-add]')!.click()
    await flushPromises()
    const count = await typeInto('quote-stone-count-0', '2400')
    expect(count.value).toBe('2400')
  })
})

describe('the take-an-order dialog’s number fields', () => {
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
