// The bench card of a ready step: "Take this job" for someone who can take it; for someone who cannot, the reason in its place.
import { describe, expect, it, vi } from 'vitest'
import { mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { BenchOperation } from '@shared/schemas/bench-floor'

vi.mock('@/composables/use-live', () => ({ useLiveKeys: () => undefined, useLiveShown: () => undefined }))
const { default: BenchOperationCard } = await import('@/components/bench-floor/BenchOperationCard.vue')

const op: BenchOperation = {
  id: 63,
  version: 1,
  status: 'ready',
  key: 'retip',
  name: 'Retip claws',
  seq: 1,
  kindId: 4,
  kindCode: 'soldering',
  kindName: 'Soldering & pickling',
  hazards: [],
  cautions: [],
  requiredLevel: 3,
  estimateMinutes: 45,
  estimateSource: 'routing',
  estimateCountsStones: false,
  actualMinutes: 0,
  runningSince: null,
  plannedStart: null,
  claimedBy: null,
  claimedByName: null,
  jobBagId: 63,
  jobBagNumber: 'JB-0063',
  piece: 'Claw retip',
  orderNumber: 'O-0063',
  dueDate: '2026-12-09',
  priority: 3,
  stones: { source: 'piece-figures', perPiece: 0, pieces: 1, total: 0, sizeMm: null, sizeRangeMm: null, pieceFigures: null },
  metal: 'gold-18ct',
  customerPiece: true,
}
const card = (refusal?: string | null) =>
  mount(BenchOperationCard, { props: { op, mode: 'mine', viewerPersonId: 5, refusal }, global: { plugins: [createPinia(), ElementPlus] } })

describe('BenchOperationCard: a ready step', () => {
  it('when the one looking may take it, then "Take this job" is offered and no reason is shown', () => {
    const w = card(null)
    expect(w.find('[data-test=claim]').text()).toBe('Take this job')
    expect(w.find('[data-test=cannot-take]').exists()).toBe(false)
  })

  it('when the one looking is not skilled for it, then no button, and the reason is said plainly', () => {
    const why = 'Ines Varga is not skilled for “Retip claws” of job bag JB-0063: it needs soldering & pickling at level 3; their level is 1.'
    const w = card(why)
    expect(w.find('[data-test=claim]').exists()).toBe(false)
    expect(w.find('[data-test=cannot-take]').text()).toBe(why)
  })
})
