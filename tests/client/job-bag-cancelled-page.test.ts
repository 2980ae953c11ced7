// A cancelled job bag's page reads as cancelled: no next step to take up, each step not done off the plan (the words the order's
// drawer uses), a done step with when it was done, and nothing on the routing to change; the note about the customer's metal stays.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { JobBagDetail, JobBagOperation } from '@shared/schemas/job-bag'
import type { HeldPiece } from '@shared/schemas/metal'

const step = (id: number, key: string, name: string, status: string, more: Partial<JobBagOperation> = {}): JobBagOperation => ({
  id,
  version: 1,
  status,
  key,
  name,
  seq: id,
  kindId: 1,
  kindCode: 'polish',
  kindName: 'Polishing',
  hazards: [],
  cautions: [],
  requiredLevel: 1,
  estimateMinutes: 30,
  estimateSource: 'routing',
  estimateCountsStones: false,
  actualMinutes: 0,
  runningSince: null,
  plannedStart: null,
  claimedBy: null,
  claimedByName: null,
  jobBagId: 5,
  jobBagNumber: 'MG26-0031-1',
  piece: 'Ring A',
  orderNumber: 'MG26-0031',
  dueDate: '2031-12-18',
  priority: 3,
  stones: { source: 'piece-figures', perPiece: 0, pieces: 1, total: 0, sizeMm: null, sizeRangeMm: null, pieceFigures: null },
  metal: null,
  customerPiece: true,
  after: [],
  waitAfterMinutes: 0,
  leadDays: 0,
  outside: false,
  plannedBenchId: null,
  plannedPersonId: null,
  finishedAt: null,
  waitingFor: [],
  estimateChanges: [],
  ...more,
})
// Finished 10:01 UTC on Wednesday 2 December 2026, which in London (the workshop's zone when none is set) is 10:01 too.
const SIZED = step(11, 'size', 'Size down', 'done', { finishedAt: '2026-12-02T10:01:42.000Z', actualMinutes: 25 })
const RETIP = step(12, 'retip', 'Retip claws', 'ready', { after: ['size'] })
const POLISH = step(13, 'polish', 'Polish', 'pending', { after: ['retip'], waitingFor: ['retip'] })

const BAG: JobBagDetail = {
  id: 5,
  number: 'MG26-0031-1',
  piece: 'Ring A',
  status: 'cancelled',
  version: 9,
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
  operations: [SIZED, RETIP, POLISH],
  timeRecords: [],
  history: [],
  plannedMinutes: 90,
  actualMinutes: 25,
  nextOperationId: 12,
  nextStepRefusal: null,
}
const RING: HeldPiece = { jobBagId: 5, number: 'MG26-0031-1', piece: 'Ring A', alloyId: 3, alloyName: '18 ct yellow gold', weightMg: 5652, weightG: 5.652 }

const api = vi.hoisted(() => ({ getJobBag: vi.fn(), orderCustomersMetal: vi.fn() }))
vi.mock('@/api/job-bags', () => ({
  getJobBag: api.getJobBag,
  addStep: vi.fn(),
  updateStep: vi.fn(),
  setJobBagStatus: vi.fn(),
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
  api.orderCustomersMetal.mockResolvedValue([RING])
})
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
})

const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
const text = (sel: string) => q(sel)?.textContent?.replace(/\s+/g, ' ').trim()
async function open(role: 'manager' | 'bench' = 'manager') {
  const pinia = createPinia()
  useSessionStore(pinia).user = { id: 1, role, name: 'Someone', email: 'someone@example.test', personId: 4, station: false } as never
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
      },
    },
  })
  await flushPromises()
}

describe('a cancelled job bag’s page', { timeout: 30_000 }, () => {
  it('when a manager opens it, then the next step says the bag is cancelled and offers no step to take up', async () => {
    await open()
    expect(text('[data-test=next-step-cancelled] h2')).toBe('Next step')
    expect(text('[data-test=next-step-cancelled] p')).toBe('Job bag MG26-0031-1 is cancelled: none of its steps is left to take up.')
    expect(q('[data-test=next-step]')).toBeNull()
    expect(q('[data-test=claim]')).toBeNull()
  })

  it('when a bench worker opens it, then the next step says the same and offers nothing to take', async () => {
    await open('bench')
    expect(text('[data-test=next-step-cancelled]')).toContain('is cancelled: none of its steps is left to take up')
    expect(q('[data-test=next-step]')).toBeNull()
    expect(q('[data-test=claim]')).toBeNull()
  })

  it('when its steps are listed, then those not done are off the plan and the done one says when it was done', async () => {
    await open()
    expect(text('[data-test=status-12]')).toBe('off the plan (job bag cancelled)')
    expect(text('[data-test=status-13]')).toBe('off the plan (job bag cancelled)')
    expect(text('[data-test=status-11]')).toBe('Done')
    expect(text('[data-test=done-at-11]')).toBe('Wed 2 Dec 2026, 10:01')
    expect(q('[data-test=routing]')?.textContent).not.toMatch(/Ready|Waiting|waits for/)
  })

  it('when a manager looks at the routing, then no step can be reordered, re-estimated, removed or added', async () => {
    await open()
    for (const id of [11, 12, 13]) {
      for (const what of ['up', 'down', 'estimate', 'skip']) expect(q(`[data-test=${what}-${id}]`), `${what}-${id}`).toBeNull()
    }
    expect(q('[data-test=add-step]')).toBeNull()
  })

  it('when it still holds the customer’s ring, then the page still says so and offers to hand it back', async () => {
    await open()
    expect(text('[data-test=bag-held-pieces]')).toContain('The customer’s own metal is still here (18 ct yellow gold, 5.652 g)')
    expect(q('[data-test=bag-hand-back]')).not.toBeNull()
  })

  it('when the bag is not cancelled, then its ready step is still offered and the routing can still be changed', async () => {
    api.getJobBag.mockResolvedValue({ ...BAG, status: 'in-work' })
    await open()
    expect(q('[data-test=next-step-cancelled]')).toBeNull()
    expect(q('[data-test=next-step] [data-test=claim]')).not.toBeNull()
    expect(text('[data-test=status-12]')).toBe('Ready')
    expect(text('[data-test=status-13]')).toBe('Waiting')
    expect(q('[data-test=estimate-12]')).not.toBeNull()
    expect(q('[data-test=add-step]')).not.toBeNull()
  })
})
