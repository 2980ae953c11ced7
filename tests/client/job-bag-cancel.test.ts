// Cancelling one job bag from its page: the dialog asks why and, when the bag holds the customer's own piece (5.652 g of 18 ct here,
// as the stock holds it), offers it at that weight and sends the weight handed over with the cancel; a weight the shared schema
// refuses stays as typed with its reason under it and nothing is sent; a bag holding nothing of theirs asks only why; a cancelled
// bag whose piece came back from the bench since says so and hands it back.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { JobBagDetail } from '@shared/schemas/job-bag'
import type { HeldPiece } from '@shared/schemas/metal'
import { errorUnder, press, typeIntoInput } from '../setup/form-fields'

const BAG: JobBagDetail = {
  id: 5,
  number: 'MG26-0031-1',
  piece: 'Ring A',
  status: 'in-work',
  version: 7,
  params: {},
  order: {
    id: 31,
    number: 'MG26-0031',
    title: 'Two rings to repair',
    dueDate: '2031-12-18',
    promisedDate: null,
    priority: 3,
    status: 'in-work',
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
const RING: HeldPiece = { jobBagId: 5, number: 'MG26-0031-1', piece: 'Ring A', alloyId: 3, alloyName: '18 ct yellow gold', weightMg: 5652, weightG: 5.652 }
/** The other bag of the same order, also holding the customer's ring: never this bag's to hand back. */
const OTHER: HeldPiece = { jobBagId: 6, number: 'MG26-0031-2', piece: 'Ring B', alloyId: 3, alloyName: '18 ct yellow gold', weightMg: 4080, weightG: 4.08 }

const api = vi.hoisted(() => ({ getJobBag: vi.fn(), setJobBagStatus: vi.fn(), orderCustomersMetal: vi.fn() }))
vi.mock('@/api/job-bags', () => ({
  getJobBag: api.getJobBag,
  addStep: vi.fn(),
  updateStep: vi.fn(),
  setJobBagStatus: api.setJobBagStatus,
  setSequence: vi.fn(),
  skipStep: vi.fn(),
  ticketUrl: vi.fn(() => ''),
}))
vi.mock('@/api/orders', () => ({ orderCustomersMetal: api.orderCustomersMetal }))
vi.mock('@/api/benches', () => ({ listBenches: vi.fn(async () => []) }))
vi.mock('@/api/operation-kinds', () => ({ listKinds: vi.fn(async () => []) }))
vi.mock('@/composables/use-live', () => ({ useLiveKeys: () => undefined, useLiveShown: () => undefined }))
vi.mock('vue-router', async (original) => ({ ...(await original<object>()), useRoute: () => ({ params: { id: '5' }, query: {} }) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: JobBagView } = await import('@/views/JobBagView.vue')
const { useSessionStore } = await import('@/stores/session')

let w: VueWrapper | undefined
beforeEach(() => {
  for (const f of Object.values(api)) f.mockReset()
  api.getJobBag.mockResolvedValue(BAG)
  api.setJobBagStatus.mockImplementation(async (_id: number, body: { status: string }) => ({ ...BAG, status: body.status, version: 8 }))
})
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
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
const weight = () => q('[data-test=bag-hand-back-g-0] input, input[data-test=bag-hand-back-g-0]') as HTMLInputElement | null
const say = (why: string) => typeIntoInput('[data-test=bag-cancel-reason] input', why)

describe('cancelling one job bag from its page', { timeout: 30_000 }, () => {
  it('when the bag holds the customer’s ring, then the dialog offers it at the 5.652 g held and the cancel hands it back at that weight', async () => {
    api.orderCustomersMetal.mockResolvedValue([RING, OTHER])
    await open()
    await press('bag-cancel')
    expect(api.orderCustomersMetal).toHaveBeenCalledWith(31)
    expect(api.setJobBagStatus).not.toHaveBeenCalled()
    const pieces = [...document.body.querySelectorAll('[data-test=bag-hand-back-piece]')].map((e) => e.textContent?.replace(/\s+/g, ' ').trim())
    expect(pieces).toEqual([expect.stringContaining('MG26-0031-1 · Ring A 18 ct yellow gold · held 5.652 g')])
    expect(weight()?.value).toBe('5.652')
    expect(q('[data-test=bag-cancel-dialog] .lead')?.textContent?.replace(/\s+/g, ' ')).toContain(
      'nothing more is made of it; any other job bag of order MG26-0031 goes on. It holds the customer’s own metal',
    )
    expect(q('[data-test=bag-cancel-confirm]')?.textContent?.trim()).toBe('Cancel the job bag and hand back')
    await say('the customer withdrew this ring')
    await press('bag-cancel-confirm')
    expect(api.setJobBagStatus).toHaveBeenCalledTimes(1)
    expect(api.setJobBagStatus).toHaveBeenCalledWith(5, {
      status: 'cancelled',
      reason: 'the customer withdrew this ring',
      handBack: [{ alloyId: 3, weightG: 5.652 }],
      version: 7,
    })
  })

  it('when the ring is weighed at the counter at 5.600 g, then that weight is sent', async () => {
    api.orderCustomersMetal.mockResolvedValue([RING])
    await open()
    await press('bag-cancel')
    await say('the customer withdrew this ring')
    await typeIntoInput('[data-test=bag-hand-back-g-0] input, input[data-test=bag-hand-back-g-0]', '5.600')
    await press('bag-cancel-confirm')
    expect(api.setJobBagStatus).toHaveBeenCalledWith(5, expect.objectContaining({ status: 'cancelled', handBack: [{ alloyId: 3, weightG: 5.6 }] }))
  })

  it('when the weight is cleared and no reason is given, then the reasons show under the fields and nothing is sent', async () => {
    api.orderCustomersMetal.mockResolvedValue([RING])
    await open()
    await press('bag-cancel')
    await typeIntoInput('[data-test=bag-hand-back-g-0] input, input[data-test=bag-hand-back-g-0]', '')
    await press('bag-cancel-confirm')
    expect(errorUnder('bag-hand-back-g-0')).toMatch(/weight in grams/i)
    expect(errorUnder('bag-cancel-reason-input')).toMatch(/say why/i)
    expect(api.setJobBagStatus).not.toHaveBeenCalled()
  })

  it('when the counter weight is typed to a tenth of a milligram (6.1234 g), then it is refused under the field, not rounded and sent', async () => {
    api.orderCustomersMetal.mockResolvedValue([RING])
    await open()
    await press('bag-cancel')
    await say('the customer withdrew this ring')
    await typeIntoInput('[data-test=bag-hand-back-g-0] input, input[data-test=bag-hand-back-g-0]', '6.1234')
    await press('bag-cancel-confirm')
    expect(weight()?.value).toBe('6.1234')
    expect(errorUnder('bag-hand-back-g-0')).toMatch(/at most 3 decimals/i)
    expect(api.setJobBagStatus).not.toHaveBeenCalled()
  })

  it('when the server refuses the weight, then its reason shows under the piece and the dialog stays open', async () => {
    api.orderCustomersMetal.mockResolvedValue([RING])
    const { ApiError } = await import('@/api/client')
    api.setJobBagStatus.mockRejectedValue(
      new ApiError({ status: 400, code: 'validation', message: 'Please correct', fields: { 'handBack.0': 'is not a customer’s piece this job bag holds' } }),
    )
    await open()
    await press('bag-cancel')
    await say('the customer withdrew this ring')
    await press('bag-cancel-confirm')
    expect(errorUnder('bag-hand-back-g-0')).toBe('Is not a customer’s piece this job bag holds')
    expect(q('[data-test=bag-cancel-dialog]')).not.toBeNull()
  })

  it('when the bag holds nothing of the customer’s, then the dialog asks only why and cancels with no hand-back', async () => {
    api.orderCustomersMetal.mockResolvedValue([OTHER])
    await open()
    await press('bag-cancel')
    expect(q('[data-test=bag-hand-back-piece]')).toBeNull()
    expect(q('[data-test=bag-cancel-confirm]')?.textContent?.trim()).toBe('Cancel the job bag')
    await say('the customer withdrew this ring')
    await press('bag-cancel-confirm')
    expect(api.setJobBagStatus).toHaveBeenCalledWith(5, { status: 'cancelled', reason: 'the customer withdrew this ring', version: 7 })
  })

  it('when the manager keeps the job bag, then nothing is sent', async () => {
    api.orderCustomersMetal.mockResolvedValue([RING])
    await open()
    await press('bag-cancel')
    await press('bag-cancel-keep')
    expect(api.setJobBagStatus).not.toHaveBeenCalled()
  })

  it('when a cancelled bag still holds the ring (back from the bench since), then the page says so and hands it back', async () => {
    api.getJobBag.mockResolvedValue({ ...BAG, status: 'cancelled' })
    api.orderCustomersMetal.mockResolvedValue([RING, OTHER])
    await open()
    expect(q('[data-test=bag-cancel]')).toBeNull()
    expect(q('[data-test=bag-held-pieces]')?.textContent?.replace(/\s+/g, ' ')).toContain('The customer’s own metal is still here (18 ct yellow gold, 5.652 g)')
    await press('bag-hand-back')
    expect(q('[data-test=bag-cancel-dialog]')?.textContent).toContain('Job bag MG26-0031-1 is cancelled and still holds the customer’s own metal')
    expect(q('[data-test=bag-cancel-confirm]')?.textContent?.trim()).toBe('Record the hand-back')
    await press('bag-cancel-confirm')
    expect(api.setJobBagStatus).toHaveBeenCalledWith(
      5,
      expect.objectContaining({ status: 'cancelled', handBack: [{ alloyId: 3, weightG: 5.652 }], version: 7 }),
    )
  })
})
