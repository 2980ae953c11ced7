// The bench tablet's weighing out: where the metal comes from unless the bench says otherwise — the customer's own piece for a
// repair's first weighing, what the bag was first weighed out as once it has been weighed, stock for new work.
import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { BenchOperation } from '@shared/schemas/bench-floor'
import type { Alloy, IssueInput, JobBagMetal, MetalMovement } from '@shared/schemas/metal'

const bag = vi.hoisted(() => ({ movements: [] as unknown[] }))
const issued = vi.hoisted(() => [] as unknown[])
vi.mock('@/api/metal', () => ({
  // The card reads only the bag's weighings and its steps' figures.
  getJobBagMetal: vi.fn(async () => ({ bySteps: [], movements: bag.movements })),
  listAlloys: vi.fn(async (): Promise<Alloy[]> => [
    {
      id: 3,
      code: 'y18',
      name: '18ct yellow',
      metal: 'gold',
      fineness: 750,
      densityGPerCm3: 15.5,
      active: true,
      version: 1,
      pricePerGramMinor: null,
      priceOn: null,
    },
  ]),
  issueMetal: vi.fn(async (body: unknown) => {
    issued.push(body)
    return { replayed: false }
  }),
  returnMetal: vi.fn(),
  correctMovement: vi.fn(),
}))
vi.mock('@/composables/use-live', () => ({ useLiveKeys: () => undefined, useLiveShown: () => undefined }))
const { default: BenchMetalWeigh } = await import('@/components/bench-floor/BenchMetalWeigh.vue')

const op = (customerPiece: boolean): BenchOperation => ({
  id: 41,
  version: 1,
  status: 'running',
  key: 'solder',
  name: 'Solder the shank',
  seq: 1,
  kindId: 4,
  kindCode: 'soldering',
  kindName: 'Soldering & pickling',
  hazards: [],
  cautions: [],
  requiredLevel: 1,
  estimateMinutes: 30,
  estimateSource: 'routing',
  estimateCountsStones: false,
  actualMinutes: 0,
  runningSince: '2026-03-02T09:00:00.000Z',
  plannedStart: null,
  claimedBy: 7,
  claimedByName: 'Sam Ottery',
  jobBagId: 12,
  jobBagNumber: 'JB-0012',
  piece: 'Signet ring',
  orderNumber: 'O-0012',
  dueDate: '2026-03-09',
  priority: 3,
  stones: { source: 'piece-figures', perPiece: 0, pieces: 1, total: 0, sizeMm: null, sizeRangeMm: null, pieceFigures: null },
  metal: 'gold-18ct',
  customerPiece,
})

/** An issue of the bag's 18ct, `weightMg` as weighed and `effectiveMg` after corrections. */
const out = (id: number, source: 'stock' | 'customer', weightMg: number, effectiveMg = weightMg): MetalMovement => ({
  id,
  kind: 'issued',
  alloyId: 3,
  alloyName: '18ct yellow',
  weightMg,
  weightG: weightMg / 1000,
  source,
  form: null,
  jobBagId: 12,
  operationId: 40,
  operationName: 'Saw the shank',
  personId: 7,
  personName: 'Sam Ottery',
  refiningLotId: null,
  costMinor: null,
  correctsId: null,
  reason: '',
  recordedBy: 'Sam Ottery',
  recordedAt: `2026-03-02T08:0${id}:00.000Z`,
  clientId: null,
  effectiveMg,
  corrections:
    effectiveMg === weightMg
      ? []
      : [{ id: id + 100, weightMg: effectiveMg - weightMg, reason: 'wrong button', recordedBy: 'Sam Ottery', recordedAt: '2026-03-02T08:30:00.000Z' }],
})
const back = (id: number, weightMg: number): MetalMovement => ({ ...out(id, 'stock', weightMg), kind: 'returned', source: null, form: 'piece' })

async function card(customerPiece: boolean, movements: MetalMovement[] = []) {
  bag.movements = movements satisfies JobBagMetal['movements']
  const w = mount(BenchMetalWeigh, { props: { op: op(customerPiece) }, global: { plugins: [createPinia(), ElementPlus] } })
  await flushPromises()
  return w
}
const chosen = (w: Awaited<ReturnType<typeof card>>) => ['stock', 'customer'].filter((s) => w.find(`[data-test=source-${s}]`).classes().includes('on'))

describe('BenchMetalWeigh: where the metal weighed out comes from', () => {
  beforeEach(() => {
    issued.length = 0
  })

  it('when a repair’s bag has not been weighed, then "Customer’s own" is chosen and 5 g goes out as the customer’s', async () => {
    const w = await card(true)
    expect(chosen(w)).toEqual(['customer'])
    await w.find('[data-test=key-5]').trigger('click')
    await w.find('[data-test=weigh-submit]').trigger('click')
    await flushPromises()
    expect(issued).toHaveLength(1)
    expect(issued[0]).toMatchObject({ jobBagId: 12, alloyId: 3, personId: 7, operationId: 41, weightG: 5, source: 'customer' } satisfies Partial<IssueInput>)
  })

  it('when new work’s bag has not been weighed, then "From stock" is chosen', async () => {
    expect(chosen(await card(false))).toEqual(['stock'])
  })

  it('when a repair’s bag was first weighed out from stock, then that is chosen for the next step, not the customer’s own', async () => {
    expect(chosen(await card(true, [out(1, 'stock', 6200), back(2, 6150)]))).toEqual(['stock'])
  })

  it('when new work’s bag was first weighed out as the customer’s (their old gold), then the piece weighed out again is still theirs', async () => {
    // The customer's 9.00 g, then 0.40 g from stock for the tips: the piece as a whole is still the customer's.
    expect(chosen(await card(false, [out(1, 'customer', 9000), out(2, 'stock', 400), back(3, 9310)]))).toEqual(['customer'])
  })

  it('when the bag’s first weighing out was corrected to 0, then it does not count and the next one says where the metal came from', async () => {
    expect(chosen(await card(false, [out(1, 'stock', 5000, 0), out(2, 'customer', 5000)]))).toEqual(['customer'])
    expect(chosen(await card(true, [out(1, 'customer', 5000, 0)]))).toEqual(['customer'])
    expect(chosen(await card(false, [out(1, 'customer', 5000, 0)]))).toEqual(['stock'])
  })

  it('when the bench taps "From stock" on a repair, then that stays chosen', async () => {
    const w = await card(true)
    await w.find('[data-test=source-stock]').trigger('click')
    expect(chosen(w)).toEqual(['stock'])
  })
})
