// A draft waiting for a decision keeps its banner's lines (what it moves, what it buys) whether or not it is shown on the board:
// after a reload of the page, after going back to the live plan, and when another manager's draft arrives.
import { beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { PlanComparison } from '@shared/schemas/plan'

const api = vi.hoisted(() => ({ getBoard: vi.fn(), listPlans: vi.fn(), comparePlan: vi.fn() }))
vi.mock('@/api/plans', async () => ({ ...(await vi.importActual<object>('@/api/plans')), ...api }))
const { useBoardStore } = await import('@/stores/board')

const emptyBoard = { window: { from: '2026-11-30', to: '2026-12-27', timeZone: 'Europe/London' }, items: [], jobs: [], benches: [], people: [], nonWorking: [] }
const live = { id: 4, number: 4, status: 'published', score: {} }
const draft = { id: 5, number: 5, status: 'draft', score: {} }
const older = { id: 3, number: 3, status: 'superseded', score: {} }
const comparisonOf = (planId: number): PlanComparison => ({
  planId,
  against: 'live',
  moves: [{ operationId: 11, from: null, to: null, change: ['time'] }],
  counts: { bench: 0, person: 0, time: 1, new: 0 },
  gains: { earlier: 1, later: 0, lessLate: 1, moreLate: 0 },
})

beforeEach(() => {
  setActivePinia(createPinia())
  api.getBoard.mockReset().mockResolvedValue(emptyBoard)
  api.listPlans.mockReset().mockResolvedValue([draft, live, older])
  api.comparePlan.mockReset().mockImplementation(async (id: number) => comparisonOf(id))
})

describe('the draft banner after a reload', () => {
  it('when the board is opened afresh with a draft waiting and the live plan shown, then the draft is compared for its banner', async () => {
    const store = useBoardStore()
    await store.refresh()
    expect(store.viewPlanId).toBeNull()
    expect(store.pendingDraft?.id).toBe(5)
    expect(api.comparePlan).toHaveBeenCalledWith(5, undefined)
    expect(store.comparison?.planId).toBe(5)
    // Not shown on the board: no bar is outlined as moved.
    expect(store.moved.size).toBe(0)
  })

  it('when the draft is shown and then the live plan again, then the banner keeps the comparison', async () => {
    const store = useBoardStore()
    await store.refresh()
    await store.showPlan(5)
    expect(store.moved.get(11)).toEqual(['time'])
    await store.showPlan(null)
    expect(store.comparison?.planId).toBe(5)
    expect(store.moved.size).toBe(0)
  })

  it('when another manager’s draft arrives while the board shows the live plan, then it is compared too', async () => {
    api.listPlans.mockResolvedValue([live, older])
    const store = useBoardStore()
    await store.refresh()
    expect(store.comparison).toBeNull()
    api.listPlans.mockResolvedValue([draft, live, older])
    await store.loadVersions()
    expect(store.comparison?.planId).toBe(5)
  })

  it('when an older version is compared in the versions drawer, then the banner keeps the draft’s comparison', async () => {
    const store = useBoardStore()
    await store.refresh()
    const other = await store.loadComparison(3)
    expect(other.planId).toBe(3)
    expect(store.comparison?.planId).toBe(5)
  })
})
