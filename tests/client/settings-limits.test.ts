// Workshop settings: a figure typed beyond its limits stays as typed and the form says why, nothing is saved — a VAT rate of
// 120 % used to become 100 % on leaving the field and was saved without a word (every document would have charged VAT at 100 %).
// The limits are the shared schema's (a rate of 0 to 100 %, a deposit of 0 to 100 %, a quote valid 1 to 365 days).
// A figure within them is sent when Save is pressed: the browser's own check of a number field, whose steps count from the
// field's hidden floor, once stopped the form without a word (a deposit of 40 % in steps of 5, a VAT rate of 17.25 %).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import { errorUnder, press, typeInto } from '../setup/form-fields'

const api = vi.hoisted(() => ({
  settings: {
    id: 1,
    name: 'Wrenfield Street Workshop',
    timeZone: 'Europe/London',
    weekPattern: [{ weekday: 1, start: '08:30', end: '17:00' }],
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
  updateWorkshop: vi.fn(),
}))
vi.mock('@/api/workshop', () => ({
  getWorkshop: vi.fn(async () => api.settings),
  listClosures: vi.fn(async () => []),
  updateWorkshop: api.updateWorkshop,
}))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []), createKind: vi.fn(), updateKind: vi.fn() }))
vi.mock('@/api/pause-reasons', () => ({ listPauseReasons: vi.fn(async () => []) }))
const { default: SettingsView } = await import('@/views/SettingsView.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.updateWorkshop.mockReset()
})

async function open() {
  w = mount(SettingsView, { attachTo: document.body, global: { plugins: [ElementPlus, createPinia()], stubs: { RouterLink: true } } })
  await flushPromises()
}
/** Sends the form the button belongs to, as pressing it does. */
async function save(test: string) {
  const button = document.body.querySelector<HTMLButtonElement>(`[data-test=${test}]`)!
  expect(button.disabled, `${test} is enabled`).toBe(false)
  button.closest('form')!.dispatchEvent(new Event('submit', { cancelable: true }))
  await flushPromises()
  // The reasons come in with the fields' transition.
  await new Promise((r) => setTimeout(r, 100))
  await flushPromises()
}

describe('limits in the workshop settings', { timeout: 30_000 }, () => {
  it('when a VAT rate of 120 is typed and saved, then it stays 120, the field says it must be 0 to 100, and nothing is sent', async () => {
    await open()
    const rate = await typeInto('settings-vat-rate', '120')
    expect(rate.value).toBe('120.00')
    await save('settings-save')
    expect(errorUnder('settings-vat-rate')).toBe('Must be 0 to 100')
    expect(api.updateWorkshop).not.toHaveBeenCalled()
  })

  it('when the VAT number is emptied while registered, then the field says it is required before anything is sent', async () => {
    await open()
    const number = document.body.querySelector<HTMLInputElement>('[data-test=settings-vat-number] input, input[data-test=settings-vat-number]')!
    number.value = ''
    number.dispatchEvent(new Event('input'))
    await flushPromises()
    await save('settings-save')
    expect(errorUnder('settings-vat-number')).toBe('Is required when the workshop is registered for VAT')
    expect(api.updateWorkshop).not.toHaveBeenCalled()
  })

  it('when a VAT rate of 17.25 % is typed and Save is pressed, then it is sent as typed (the browser’s own step check does not stop the form)', async () => {
    api.updateWorkshop.mockImplementation(async (body: object) => ({ ...api.settings, ...body, version: 2 }))
    await open()
    expect((await typeInto('settings-vat-rate', '17.25')).value).toBe('17.25')
    await press('settings-save')
    expect(api.updateWorkshop).toHaveBeenCalledTimes(1)
    expect(api.updateWorkshop.mock.calls[0]![0]).toMatchObject({ vatRatePct: 17.25 })
  })

  it('when a deposit of 120 % and a quote valid 400 days are typed and Save is pressed, then both stay as typed, each is refused under its field, and nothing is sent', async () => {
    await open()
    expect((await typeInto('settings-deposit-pct', '120')).value).toBe('120')
    expect((await typeInto('settings-quote-days', '400')).value).toBe('400')
    await press('settings-money-save')
    expect(errorUnder('settings-deposit-pct')).toBe('Must be 0 to 100')
    expect(errorUnder('settings-quote-days')).toBe('Must be 1 to 365 days')
    expect(api.updateWorkshop).not.toHaveBeenCalled()
  })

  it('when the deposit is emptied and Save is pressed, then the field says it is required and nothing is sent', async () => {
    await open()
    await typeInto('settings-deposit-pct', '')
    await press('settings-money-save')
    expect(errorUnder('settings-deposit-pct')).toBe('Is required')
    expect(api.updateWorkshop).not.toHaveBeenCalled()
  })

  it('when a deposit of 40 % and a quote valid 21 days are typed and Save is pressed, then the rules are sent with what every change carries and nothing else', async () => {
    api.updateWorkshop.mockImplementation(async (body: object) => ({ ...api.settings, ...body, version: 2 }))
    await open()
    await typeInto('settings-deposit-pct', '40')
    await typeInto('settings-quote-days', '21')
    document.body.querySelector<HTMLInputElement>('[data-test=settings-no-metal] input')!.click()
    await flushPromises()
    await press('settings-money-save')
    expect(api.updateWorkshop).toHaveBeenCalledTimes(1)
    expect(api.updateWorkshop.mock.calls[0]![0]).toEqual({
      name: 'Wrenfield Street Workshop',
      timeZone: 'Europe/London',
      weekPattern: [{ weekday: 1, start: '08:30', end: '17:00' }],
      planningLoad: 0.85,
      version: 1,
      depositPct: 40,
      quoteValidDays: 21,
      noMetalBeforeDeposit: true,
    })
  })

  it('when a registered workshop’s VAT number lacks a digit, then it stays as typed and the field says what a UK number looks like', async () => {
    // A UK VAT number as we remember HMRC's formats: GB or XI, then 9 digits (or 12 with a branch); "GB 123 4567 8" has 8.
    await open()
    const number = document.body.querySelector<HTMLInputElement>('[data-test=settings-vat-number] input, input[data-test=settings-vat-number]')!
    number.value = 'GB 123 4567 8'
    number.dispatchEvent(new Event('input'))
    await flushPromises()
    await press('settings-save')
    expect(number.value).toBe('GB 123 4567 8')
    expect(errorUnder('settings-vat-number')).toBe(
      'Must be a UK VAT number: GB or XI and 9 digits (12 with a branch number), GBGD and 000–499, or GBHA and 500–999, such as GB 123 4567 89',
    )
    expect(api.updateWorkshop).not.toHaveBeenCalled()
  })
})
