// A bench's capacity typed beyond its limits (the shared schema's 1 to 4 pieces at once) stays as typed and is refused under
// its field, and nothing is saved — 6 used to become 4 on leaving the field and was saved without a word.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Bench } from '@shared/schemas/bench'
import { errorUnder, press, typeInto } from '../setup/form-fields'

const BENCH: Bench = { id: 3, version: 2, name: 'Setting bench 1', kind: 'setting', capacity: 1, kindIds: [], active: true, notes: '', downtime: [] }
const api = vi.hoisted(() => ({ updateBench: vi.fn() }))
vi.mock('@/api/benches', () => ({
  listBenches: vi.fn(async () => []),
  createBench: vi.fn(),
  updateBench: api.updateBench,
  addDowntime: vi.fn(),
  removeDowntime: vi.fn(),
}))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => Promise.reject(new Error('not here'))), listClosures: vi.fn(async () => []) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: BenchEditDialog } = await import('@/components/benches/BenchEditDialog.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.updateBench.mockReset()
})

async function open() {
  w = mount(BenchEditDialog, { props: { open: true, bench: BENCH }, attachTo: document.body, global: { plugins: [ElementPlus, createPinia()] } })
  await flushPromises()
}

describe('a bench’s capacity', { timeout: 30_000 }, () => {
  it('when 6 pieces at once are typed and the bench is saved, then 6 stays, the field says it must be at most 4, and nothing is sent until it is put right', async () => {
    await open()
    expect((await typeInto('bench-capacity', '6')).value).toBe('6')
    await press('bench-save')
    expect(errorUnder('bench-capacity')).toBe('Must be at most 4')
    expect(api.updateBench).not.toHaveBeenCalled()
    // Put right, it is saved as typed.
    api.updateBench.mockImplementation(async (_id: number, body: object) => ({ ...BENCH, ...body, version: 3 }))
    await typeInto('bench-capacity', '3')
    await press('bench-save')
    expect(api.updateBench).toHaveBeenCalledTimes(1)
    expect(api.updateBench.mock.calls[0]![1]).toMatchObject({ capacity: 3, version: 2 })
  })

  it('when 0 is typed, then 0 stays and the field says it must be at least 1, and nothing is sent', async () => {
    await open()
    expect((await typeInto('bench-capacity', '0')).value).toBe('0')
    await press('bench-save')
    expect(errorUnder('bench-capacity')).toBe('Must be at least 1')
    expect(api.updateBench).not.toHaveBeenCalled()
  })
})
