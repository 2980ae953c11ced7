// The metal screen's figures typed beyond the shared schema's limits stay as typed and are refused with its reason, and nothing
// is saved: a loss tolerance of 60 % (toleranceInput: 0 to 50 %) used to become 50 % on leaving the field and was saved at once,
// and −5 g of fine metal credited on a lot (refiningSettleInput: not negative) became 0 g and settled the lot, both without a word.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { RefiningLot, Tolerance } from '@shared/schemas/metal'
import { typeInto } from '../setup/form-fields'

const TOLERANCES: Tolerance[] = [{ kindId: 4, code: 'setting', name: 'Setting', tolerancePct: 1, isDefault: false, version: 2 }]
const LOT: RefiningLot = {
  id: 9,
  number: 'RL-0003',
  status: 'sent',
  refiner: 'Northgate Refining',
  sentAt: '2026-11-30T10:00:00.000Z',
  settledAt: null,
  creditedFineMg: null,
  creditedMinor: null,
  notes: '',
  version: 3,
  createdAt: '2026-11-20T10:00:00.000Z',
  sentMg: 42_500,
  sentFineMg: 31_875,
  recoveryPct: null,
  byAlloy: [],
  items: [],
}
const api = vi.hoisted(() => ({ setTolerance: vi.fn(), settleLot: vi.fn() }))
vi.mock('@/api/metal', () => ({
  listTolerances: vi.fn(async () => TOLERANCES),
  setTolerance: api.setTolerance,
  listLots: vi.fn(async () => [LOT]),
  settleLot: api.settleLot,
  listPrices: vi.fn(async () => []),
  setPrice: vi.fn(),
  createLot: vi.fn(),
  addToLot: vi.fn(),
  sendLot: vi.fn(),
}))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: MetalAlloyPrices } = await import('@/components/metal/MetalAlloyPrices.vue')
const { default: MetalRefiningLots } = await import('@/components/metal/MetalRefiningLots.vue')
const { useMetalStore } = await import('@/stores/metal')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.setTolerance.mockReset()
  api.settleLot.mockReset()
})

const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)

describe('figures on the metal screen', { timeout: 30_000 }, () => {
  it('when the owner types a setting tolerance of 60 %, then 60 stays, it is said to be at most 50 %, and nothing is saved until it is put right', async () => {
    const pinia = createPinia()
    await useMetalStore(pinia).loadTolerances()
    w = mount(MetalAlloyPrices, { props: { alloys: [], currency: 'GBP', owner: true }, attachTo: document.body, global: { plugins: [ElementPlus, pinia] } })
    await flushPromises()
    expect((await typeInto('tolerance-setting', '60')).value).toBe('60.0')
    expect(q('[data-test=tolerance-setting-problem]')?.textContent?.trim()).toBe('Must be at most 50 %')
    expect(api.setTolerance).not.toHaveBeenCalled()
    // Put right, it is saved as typed, off the field's steps of 0.5 too, with the version the table was read at.
    api.setTolerance.mockImplementation(async () => TOLERANCES[0])
    await typeInto('tolerance-setting', '2.3')
    expect(q('[data-test=tolerance-setting-problem]')).toBeNull()
    expect(api.setTolerance.mock.calls).toEqual([[4, { tolerancePct: 2.3, version: 2 }]])
  })

  it('when −5 g of fine metal credited is typed and the lot settled, then −5 stays, it is said not to be negative, and nothing is sent', async () => {
    const pinia = createPinia()
    await useMetalStore(pinia).loadLots()
    w = mount(MetalRefiningLots, { props: { alloys: [], currency: 'GBP' }, attachTo: document.body, global: { plugins: [ElementPlus, pinia] } })
    await flushPromises()
    q('[data-test=lot-table] .el-table__row')!.click()
    await flushPromises()
    expect((await typeInto('lot-credit-fine', '-5')).value).toBe('-5.000')
    ;(q('[data-test=lot-settle]') as HTMLButtonElement).click()
    await flushPromises()
    expect(q('[data-test=lot-detail]')?.textContent).toContain('creditedFineG: Must not be negative')
    expect(api.settleLot).not.toHaveBeenCalled()
  })
})
