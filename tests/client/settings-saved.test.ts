// Workshop settings: the toast after a save says what was saved (the VAT details, the workshop's details, or both; a new name
// shows in the sidebar at once), and a VAT number stored before its shape was checked holds back no other detail — it is
// checked once the VAT details change (as we remember HMRC's formats, "GB 123 4567 8" has 8 digits where 9 belong).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { errorUnder, press, typeInto, typeIntoInput } from '../setup/form-fields'

const api = vi.hoisted(() => ({
  settings: {
    id: 1,
    name: 'Wrenfield Street Workshop',
    timeZone: 'Europe/London',
    weekPattern: [{ weekday: 1, start: '08:30', end: '17:00' }],
    planningLoad: 0.85,
    address: '14 Wrenfield Street, Bath BA1 1AA',
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
  stored: {} as Record<string, unknown>,
  updateWorkshop: vi.fn(),
}))
vi.mock('@/api/workshop', () => ({
  getWorkshop: vi.fn(async () => ({ ...api.settings, ...api.stored })),
  listClosures: vi.fn(async () => []),
  updateWorkshop: api.updateWorkshop,
}))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []), createKind: vi.fn(), updateKind: vi.fn() }))
vi.mock('@/api/pause-reasons', () => ({ listPauseReasons: vi.fn(async () => []) }))
const { default: SettingsView } = await import('@/views/SettingsView.vue')
const { useSessionStore } = await import('@/stores/session')
let pinia: Pinia

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.updateWorkshop.mockReset()
  api.stored = {}
})

async function open(stored: Record<string, unknown> = {}) {
  api.stored = stored
  api.updateWorkshop.mockImplementation(async (body: object) => ({ ...api.settings, ...api.stored, ...body, version: 2 }))
  pinia = createPinia()
  setActivePinia(pinia)
  useSessionStore().user = {
    id: 1,
    email: 'owner@wrenfield.test',
    name: 'Owner',
    role: 'owner',
    workshopId: 1,
    workshopName: 'Wrenfield Street Workshop',
    personId: null,
  }
  w = mount(SettingsView, { attachTo: document.body, global: { plugins: [ElementPlus, pinia], stubs: { RouterLink: true } } })
  await flushPromises()
}
/** What the success toasts on screen say, oldest first (Element Plus puts them in the page body). */
const saidSaved = () => [...document.querySelectorAll('.el-message--success')].map((e) => e.textContent?.trim() ?? '')
/** The VAT number's field (Element Plus hands the mark on to the input itself). */
const typeNumber = (text: string) => typeIntoInput('input[data-test=settings-vat-number], [data-test=settings-vat-number] input', text)

describe('what the settings say they saved', { timeout: 30_000 }, () => {
  it('when only the VAT rate changes, then the toast says the VAT details were saved and nothing of the name', async () => {
    await open()
    await typeInto('settings-vat-rate', '17.5')
    await press('settings-save')
    expect(api.updateWorkshop).toHaveBeenCalledTimes(1)
    expect(saidSaved()).toEqual(['VAT details saved'])
  })

  it('when only the VAT number changes, to a Northern Ireland one, then the toast says the VAT details were saved', async () => {
    await open()
    await typeNumber('XI 123 4567 89')
    await press('settings-save')
    expect(api.updateWorkshop.mock.calls[0]![0]).toMatchObject({ vatNumber: 'XI 123 4567 89' })
    expect(saidSaved()).toEqual(['VAT details saved'])
  })

  it('when the telephone changes, then the workshop details were saved; with the name and the rate too, both, and the sidebar shows the new name at once', async () => {
    await open()
    await typeIntoInput('input[data-test=settings-phone], [data-test=settings-phone] input', '01632 960 000')
    await press('settings-save')
    expect(saidSaved()).toEqual(['Workshop details saved'])
    await typeIntoInput('input[data-test=settings-name], [data-test=settings-name] input', 'Wrenfield Works')
    await typeInto('settings-vat-rate', '5')
    await press('settings-save')
    expect(saidSaved()).toEqual(['Workshop details saved', 'Workshop and VAT details saved'])
    expect(useSessionStore(pinia).user?.workshopName).toBe('Wrenfield Works')
  })
})

describe('a VAT number stored with a bad shape', { timeout: 30_000 }, () => {
  it('when only the address changes, then it is sent and saved with the number as stored', async () => {
    await open({ vatNumber: 'GB 123 4567 8' })
    await typeIntoInput('input[data-test=settings-address], [data-test=settings-address] input', '22 Wrenfield Street, Bath BA1 1AA')
    await press('settings-save')
    expect(errorUnder('settings-vat-number')).toBeNull()
    expect(api.updateWorkshop).toHaveBeenCalledTimes(1)
    expect(api.updateWorkshop.mock.calls[0]![0]).toMatchObject({ address: '22 Wrenfield Street, Bath BA1 1AA', vatNumber: 'GB 123 4567 8' })
    expect(saidSaved()).toEqual(['Workshop details saved'])
  })

  it('when the number changes to another bad one, or the rate changes, then the field says what a UK number looks like and nothing is sent', async () => {
    await open({ vatNumber: 'GB 123 4567 8' })
    const reason = 'Must be a UK VAT number: GB or XI and 9 digits (12 with a branch number), GBGD and 000–499, or GBHA and 500–999, such as GB 123 4567 89'
    // A government department's number runs 000 to 499.
    await typeNumber('GBGD 500')
    await press('settings-save')
    expect(errorUnder('settings-vat-number')).toBe(reason)
    await typeNumber('GB 123 4567 8')
    await typeInto('settings-vat-rate', '5')
    await press('settings-save')
    expect(errorUnder('settings-vat-number')).toBe(reason)
    expect(api.updateWorkshop).not.toHaveBeenCalled()
  })
})
