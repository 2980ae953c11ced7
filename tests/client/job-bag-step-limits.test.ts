// A job bag's step figures: a step added with an estimate the shared schema allows (stepAdd: up to 100000 minutes) is sent as
// typed — the field put 15000 back to 10000 without a word — and a figure beyond the limits (a skill level of 4, an estimate of
// 120000 minutes) stays as typed, is refused under its field, and nothing is sent.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { JobBagDetail, JobBagOperation } from '@shared/schemas/job-bag'
import { errorUnder, press, typeIntoInput as typeInto } from '../setup/form-fields'

const BAG: JobBagDetail = {
  id: 5,
  number: 'MG26-0031-1',
  piece: 'Signet ring',
  status: 'in-work',
  version: 7,
  params: {},
  order: {
    id: 31,
    number: 'MG26-0031',
    title: 'Signet ring',
    dueDate: '2026-12-18',
    promisedDate: null,
    priority: 3,
    status: 'open',
    customerReference: 'C-0012',
    customerName: 'Hollis Marrow',
  },
  operations: [],
  timeRecords: [],
  history: [],
  plannedMinutes: 0,
  actualMinutes: 0,
  nextOperationId: null,
  nextStepRefusal: null,
}
/** The step whose estimate is changed: only what the dialog reads of it. */
const STEP = { id: 40, name: 'Polish', estimateMinutes: 45, version: 3 } as JobBagOperation
const api = vi.hoisted(() => ({ addStep: vi.fn(), updateStep: vi.fn() }))
vi.mock('@/api/job-bags', () => ({
  getJobBag: vi.fn(async () => BAG),
  addStep: api.addStep,
  updateStep: api.updateStep,
  setJobBagStatus: vi.fn(),
  setSequence: vi.fn(),
  skipStep: vi.fn(),
  ticketUrl: vi.fn(() => ''),
}))
vi.mock('@/api/benches', () => ({ listBenches: vi.fn(async () => []) }))
vi.mock('@/api/operation-kinds', () => ({
  listKinds: vi.fn(async () => [{ id: 2, workshopId: 1, code: 'polish', name: 'Polishing', outside: false, hazards: [], color: '#777777', version: 0 }]),
}))
vi.mock('@/composables/use-live', () => ({ useLiveKeys: () => undefined, useLiveShown: () => undefined }))
vi.mock('vue-router', async (original) => ({ ...(await original<object>()), useRoute: () => ({ params: { id: '5' }, query: {} }) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: JobBagView } = await import('@/views/JobBagView.vue')
const { default: JobBagRouting } = await import('@/components/jobbag/JobBagRouting.vue')
const { useSessionStore } = await import('@/stores/session')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.addStep.mockReset()
  api.updateStep.mockReset()
})

const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
async function open() {
  const pinia = createPinia()
  useSessionStore(pinia).user = { id: 1, role: 'manager', name: 'Manager', email: 'manager@example.test', personId: null, station: false } as never
  w = mount(JobBagView, {
    attachTo: document.body,
    global: {
      plugins: [ElementPlus, pinia],
      stubs: {
        RouterLink: true,
        StoneListPanel: true,
        JobBagMetalPanel: true,
        FileGallery: true,
        OrderMoneyPanel: true,
        BenchActions: true,
        JobBagHistory: true,
        JobBagRingSizeDialog: true,
        JobBagRouting: true,
      },
    },
  })
  await flushPromises()
}
/** Opens "Add a step" and fills it in as a person does: the kind picked from the list, a name and why. */
async function openAdd() {
  await press('add-step')
  q('[data-test=add-kind] .el-select__wrapper, [data-test=add-kind]')!.click()
  await flushPromises()
  ;[...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')].find((e) => e.textContent?.trim() === 'Polishing')!.click()
  await flushPromises()
  await typeInto('[data-test=add-name] input, input[data-test=add-name]', 'Second polish')
  await typeInto('[data-test=add-reason] input, input[data-test=add-reason]', 'scratch found at inspection')
}

describe('the figures of a job bag’s steps', { timeout: 30_000 }, () => {
  it('when a step of 15000 minutes is added, then it is sent with 15000 minutes', async () => {
    api.addStep.mockImplementation(async () => BAG)
    await open()
    await openAdd()
    expect((await typeInto('[data-test=add-minutes] input', '15000')).value).toBe('15000')
    await press('add-save')
    expect(api.addStep).toHaveBeenCalledTimes(1)
    expect(api.addStep.mock.calls[0]![1]).toMatchObject({ kindId: 2, name: 'Second polish', estimateMinutes: 15000, requiredLevel: 1, version: 7 })
  })

  it('when a step needing skill level 4 is added, then 4 stays, the field says it must be 1, 2 or 3, and nothing is sent', async () => {
    await open()
    await openAdd()
    expect((await typeInto('[data-test=add-level] input', '4')).value).toBe('4')
    await press('add-save')
    expect(errorUnder('add-level')).toBe('Must be 1, 2 or 3')
    expect(api.addStep).not.toHaveBeenCalled()
  })

  it('when a step’s estimate is changed to 120000 minutes, then it stays, the field says the most it may be, and nothing is sent', async () => {
    await open()
    w!.findComponent(JobBagRouting).vm.$emit('estimate', STEP)
    await flushPromises()
    expect((await typeInto('[data-test=estimate-minutes] input', '120000')).value).toBe('120000')
    await typeInto('[data-test=estimate-reason] input, input[data-test=estimate-reason]', 'heavier shank than usual')
    await press('estimate-save')
    expect(errorUnder('estimate-minutes')).toBe('Must be at most 100000 minutes')
    expect(api.updateStep).not.toHaveBeenCalled()
  })
})
