// With two drafts waiting, the banner speaks for the one shown on the board: what it compares, and what Publish publishes.
import { beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { PlanComparison } from '@shared/schemas/plan'

const api = vi.hoisted(() => ({ getBoard: vi.fn(), listPlans: vi.fn(), comparePlan: vi.fn(), publishPlan: vi.fn(), discardPlan: vi.fn() }))
vi.mock('@/api/plans', async () => ({ ...(await vi.importActual<object>('@/api/plans')), ...api }))
const { useBoardStore } = await import('@/stores/board')

const emptyBoard = { window: { from: '2026-11-30', to: '2026-12-27', timeZone: 'Europe/London' }, items: [], jobs: [], benches: [], people: [], nonWorking: [] }
const live = { id: 11, number: 1, status: 'published', score: {} }
// Plan 2 ("keep changes small") and plan 3 ("best dates"), the newest listed first as the server lists them.
const plan2 = { id: 12, number: 2, status: 'draft', score: {} }
const plan3 = { id: 13, number: 3, status: 'draft', score: {} }
const comparisonOf = (planId: number): PlanComparison => ({
  planId,
  against: 'live',
  moves: [{ operationId: planId * 100, from: null, to: null, change: ['time'] }],
  counts: { bench: 0, person: 0, time: 1, new: 0 },
  gains: { earlier: 0, later: 0, lessLate: 0, moreLate: 0 },
})

beforeEach(() => {
  setActivePinia(createPinia())
  api.getBoard.mockReset().mockResolvedValue(emptyBoard)
  api.listPlans.mockReset().mockResolvedValue([plan3, plan2, live])
  api.comparePlan.mockReset().mockImplementation(async (id: number) => comparisonOf(id))
  api.publishPlan.mockReset().mockResolvedValue({ ...plan2, status: 'published' })
  api.discardPlan.mockReset().mockResolvedValue({ ...plan2, status: 'discarded' })
})

describe('the draft banner with two drafts', () => {
  it('when the older draft (plan 2) is shown, then the banner is plan 2’s, with its comparison, and Publish publishes plan 2', async () => {
    const store = useBoardStore()
    await store.refresh()
    expect(store.bannerDraft?.number).toBe(3)
    await store.showPlan(12)
    expect(store.bannerDraft?.number).toBe(2)
    expect(store.comparison?.planId).toBe(12)
    // The view's Publish and Throw away act on the banner's draft.
    await store.publish(store.bannerDraft!.id)
    expect(api.publishPlan).toHaveBeenCalledWith(12)
  })

  it('when the older draft is shown and then the live plan again, then the banner is the newest draft’s again', async () => {
    const store = useBoardStore()
    await store.refresh()
    await store.showPlan(12)
    await store.showPlan(null)
    expect(store.bannerDraft?.number).toBe(3)
    expect(store.comparison?.planId).toBe(13)
  })

  it('when the older draft is shown, then Throw away throws away plan 2 and plan 3 still waits', async () => {
    const store = useBoardStore()
    await store.refresh()
    await store.showPlan(12)
    api.listPlans.mockResolvedValue([plan3, { ...plan2, status: 'discarded' }, live])
    await store.discard(store.bannerDraft!.id)
    expect(api.discardPlan).toHaveBeenCalledWith(12)
    expect(store.bannerDraft?.number).toBe(3)
  })
})
