// Board store: a move settles the drag before reloading; refusals carry the rule's reason, a stale version reloads and says so.
import { beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import { ApiError } from '@/api/client'
import type { BoardItem } from '@shared/schemas/board'
import type { PlanRun } from '@shared/schemas/plan'

const api = vi.hoisted(() => ({ moveOperation: vi.fn(), getBoard: vi.fn(), listPlans: vi.fn() }))
vi.mock('@/api/plans', async () => ({ ...(await vi.importActual<object>('@/api/plans')), ...api }))
const { useBoardStore } = await import('@/stores/board')

const item = { id: 9, name: 'Barrel and polish', jobBagNumber: 'MG26-0066-1', version: 2 } as BoardItem
const emptyBoard = { window: { from: '2026-11-30', to: '2026-12-27', timeZone: 'Europe/London' }, items: [], jobs: [], benches: [], people: [], nonWorking: [] }

beforeEach(() => {
  setActivePinia(createPinia())
  api.moveOperation.mockReset()
  api.getBoard.mockReset().mockResolvedValue(emptyBoard)
  api.listPlans.mockReset().mockResolvedValue([])
})

describe('moving a bar', () => {
  it('when the server accepts, then the drag is accepted before the board reloads', async () => {
    const order: string[] = []
    api.moveOperation.mockResolvedValue({ id: 9, version: 3 })
    api.getBoard.mockImplementation(async () => {
      order.push('reload')
      return emptyBoard
    })
    const r = await useBoardStore().move(item, { benchId: 7, version: 2 }, (ok) => order.push(`settle:${ok}`))
    expect(r).toEqual({ ok: true })
    expect(order).toEqual(['settle:true', 'reload'])
    expect(api.moveOperation).toHaveBeenCalledWith(9, { benchId: 7, version: 2 })
  })

  it('when the server accepts, then the plan list is read again too (the live plan figures shown in the banner changed)', async () => {
    api.moveOperation.mockResolvedValue({ id: 9, version: 3 })
    const live = { id: 4, status: 'published', score: { weightedTardiness: 1200 } }
    api.listPlans.mockResolvedValue([live])
    const store = useBoardStore()
    await store.move(item, { benchId: 7, version: 2 })
    expect(api.listPlans).toHaveBeenCalledTimes(1)
    expect(store.livePlan).toEqual(live)
  })

  it('when the server refuses (422), then the bar goes back and the reason and rule are kept for the board', async () => {
    api.moveOperation.mockRejectedValue(
      new ApiError({
        status: 422,
        code: 'unprocessable',
        message: 'Setting bench A is not equipped for polishing (“Barrel and polish” of JB-0001).',
        details: { rule: 'bench capability' },
      }),
    )
    const settle = vi.fn()
    const r = await useBoardStore().move(item, { benchId: 5, version: 2 }, settle)
    expect(r).toEqual({
      ok: false,
      kind: 'refused',
      message: 'Setting bench A is not equipped for polishing (“Barrel and polish” of JB-0001).',
      rule: 'bench capability',
    })
    expect(settle).toHaveBeenCalledWith(false)
    expect(api.getBoard).not.toHaveBeenCalled()
  })

  it('when someone else changed the bar first (409), then the bar goes back, the board reloads and the message says so', async () => {
    api.moveOperation.mockRejectedValue(new ApiError({ status: 409, code: 'conflict', message: 'changed by someone else' }))
    const settle = vi.fn()
    const r = await useBoardStore().move(item, { start: '2026-12-04T09:00:00.000Z', version: 2 }, settle)
    expect(r).toMatchObject({ ok: false, kind: 'stale' })
    expect((r as { message: string }).message).toMatch(/Someone else changed “Barrel and polish” of MG26-0066-1/)
    expect(settle).toHaveBeenCalledWith(false)
    expect(api.getBoard).toHaveBeenCalledTimes(1)
  })
})

describe('planner runs', () => {
  const run = (status: PlanRun['status']): PlanRun => ({
    id: 'run-1',
    status,
    startedAt: '2026-12-03T10:00:00.000Z',
    timeLimitSeconds: 10,
    progress: null,
    planId: null,
    error: null,
    note: null,
    stability: 'small-changes',
  })

  it('when our run is still queued, then it counts as running; when it fails on whichever instance ran it, then it reads failed with the reason', () => {
    const store = useBoardStore()
    store.run = run('queued')
    expect(store.running).toBe(true)
    // Another manager's run failing is not ours.
    store.onFailed({ runId: 'run-2', error: 'elsewhere' })
    expect(store.run).toMatchObject({ status: 'queued', error: null })
    store.onFailed({ runId: 'run-1', error: 'The planner stopped answering 3 times (the app instance running it went away).' })
    expect(store.run).toMatchObject({ status: 'failed', error: 'The planner stopped answering 3 times (the app instance running it went away).' })
    expect(store.running).toBe(false)
  })

  it('when a failure arrives for a run that already ended, then its outcome stays', () => {
    const store = useBoardStore()
    store.run = { ...run('done'), planId: 12 }
    store.onFailed({ runId: 'run-1', error: 'late news' })
    expect(store.run).toMatchObject({ status: 'done', planId: 12, error: null })
  })
})

describe('the day the board opens on', () => {
  // The demo workshop's week (common practice for a small workshop, no source): Monday to Friday 08:30–12:30 and 13:15–17:00.
  // December in London is GMT, so these UTC instants are the workshop's own clock. Sat 5 Dec 2026 is in ISO week 49 (Mon 30 Nov).
  const shut = [
    { start: '2026-12-04T17:00:00.000Z', end: '2026-12-07T08:30:00.000Z' },
    { start: '2026-12-07T12:30:00.000Z', end: '2026-12-07T13:15:00.000Z' },
    { start: '2026-12-07T17:00:00.000Z', end: '2026-12-08T08:30:00.000Z' },
  ]
  const week49 = { ...emptyBoard, nonWorking: shut }
  const week50 = { ...emptyBoard, window: { from: '2026-12-07', to: '2027-01-03', timeZone: 'Europe/London' }, nonWorking: shut }

  it('when it is opened on a Saturday, then it moves on to Monday 7 December and loads the weeks from there', async () => {
    vi.useFakeTimers({ toFake: ['Date'] })
    vi.setSystemTime(new Date('2026-12-05T10:00:00.000Z'))
    try {
      api.getBoard.mockImplementation(async (q: { from: string }) => (q.from === '2026-12-07' ? week50 : week49))
      const store = useBoardStore()
      expect(store.anchorDay).toBe('2026-12-05')
      await store.loadBoard()
      expect(store.anchorDay).toBe('2026-12-07')
      expect(store.openingMoves).toBe(1)
      await vi.waitFor(() => expect(api.getBoard).toHaveBeenCalledWith(expect.objectContaining({ from: '2026-12-07', to: '2027-01-03' })))
    } finally {
      vi.useRealTimers()
    }
  })

  it('when it is opened on Monday at lunch, then it stays on Monday; moved away, "Today" brings it back', async () => {
    vi.useFakeTimers({ toFake: ['Date'] })
    vi.setSystemTime(new Date('2026-12-07T12:45:00.000Z'))
    try {
      api.getBoard.mockResolvedValue(week50)
      const store = useBoardStore()
      await store.loadBoard()
      expect(store.anchorDay).toBe('2026-12-07')
      expect(store.openingMoves).toBe(0)
      store.setAnchor('2026-12-09')
      store.today()
      expect(store.anchorDay).toBe('2026-12-07')
    } finally {
      vi.useRealTimers()
    }
  })

  it('when "Today" is pressed on a Friday evening, then the board goes to the Monday after', async () => {
    vi.useFakeTimers({ toFake: ['Date'] })
    vi.setSystemTime(new Date('2026-12-04T18:30:00.000Z'))
    try {
      api.getBoard.mockResolvedValue(week49)
      const store = useBoardStore()
      await store.loadBoard()
      expect(store.anchorDay).toBe('2026-12-07')
      store.setAnchor('2026-11-30')
      store.today()
      await vi.waitFor(() => expect(store.anchorDay).toBe('2026-12-07'))
    } finally {
      vi.useRealTimers()
    }
  })
})
