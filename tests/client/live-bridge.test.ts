// Live bridge: each socket event reaches the stores it concerns once, by id and version; this tab's own echo and older
// versions are skipped; the planner run follows socket events and polls only while the socket is down; the bench queue follows a published plan.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { BoardItem, PlanRun } from '@/api/plans'
import { FakeSocket } from './fake-socket'

const plans = vi.hoisted(() => ({
  getBoard: vi.fn(),
  listPlans: vi.fn(),
  getLoad: vi.fn(),
  comparePlan: vi.fn(),
  startRun: vi.fn(),
  getRun: vi.fn(),
  stopRun: vi.fn(),
}))
const bench = vi.hoisted(() => ({ myWork: vi.fn(), nextForMe: vi.fn() }))
const benchesApi = vi.hoisted(() => ({ listBenches: vi.fn() }))
vi.mock('@/api/plans', async () => ({ ...(await vi.importActual<object>('@/api/plans')), ...plans }))
vi.mock('@/api/bench-floor', async () => ({ ...(await vi.importActual<object>('@/api/bench-floor')), ...bench }))
vi.mock('@/api/benches', async () => ({ ...(await vi.importActual<object>('@/api/benches')), ...benchesApi }))
const { LiveChannel } = await import('@/realtime/socket')
const { startLiveBridge } = await import('@/realtime/bridge')
const { useLiveStore } = await import('@/stores/live')
const { useBoardStore } = await import('@/stores/board')
const { useBenchFloorStore } = await import('@/stores/bench-floor')
const { usePlannerRunStore, RUN_POLL_MS, RUN_LATE_GRACE_MS, RUN_LATE_POLL_MS } = await import('@/stores/planner-run')
const { useBenchesStore } = await import('@/stores/benches')

const SELF = 'tab-self-0001'
const OTHER = 'tab-other-002'
const bar = (id: number, version: number) => ({ id, version, name: 'Polish', jobBagNumber: 'MG26-0001-1' }) as BoardItem
const board = (items: BoardItem[]) => ({
  window: { from: '2026-11-30', to: '2026-12-27', timeZone: 'Europe/London' },
  items,
  jobs: [],
  benches: [],
  people: [],
  nonWorking: [],
})
const run = (status: PlanRun['status'], extra: Partial<PlanRun> = {}): PlanRun => ({
  id: 'run-1',
  status,
  startedAt: '2026-12-03T10:00:00.000Z',
  timeLimitSeconds: 10,
  progress: null,
  planId: null,
  error: null,
  note: null,
  stability: 'small-changes',
  ...extra,
})

let socket: FakeSocket
let stop: () => void
let jobBagKeys: ReturnType<typeof vi.fn<() => void>>

beforeEach(async () => {
  vi.useFakeTimers()
  setActivePinia(createPinia())
  for (const f of [...Object.values(plans), ...Object.values(bench), ...Object.values(benchesApi)]) f.mockReset()
  plans.getBoard.mockResolvedValue(board([bar(40, 2), bar(41, 7)]))
  plans.listPlans.mockResolvedValue([])
  plans.getLoad.mockResolvedValue({})
  bench.myWork.mockResolvedValue({ items: [{ id: 41, version: 7 }], person: { id: 1, name: 'Ada' } })
  bench.nextForMe.mockResolvedValue({ items: [{ id: 40, version: 2 }] })
  benchesApi.listBenches.mockResolvedValue([])
  socket = new FakeSocket()
  const channel = new LiveChannel(socket)
  stop = startLiveBridge({ channel, clientId: SELF, debounceMs: 0 }).stop
  const live = useLiveStore()
  live.show('board')
  live.show('bench-floor')
  useBenchFloorStore().benchId = 3
  // The stores hold what the screens loaded before any event.
  await useBoardStore().loadBoard()
  await useBenchFloorStore().refresh()
  jobBagKeys = vi.fn<() => void>()
  live.watchKeys(() => ['jobBag:12', 'operation:40'], jobBagKeys)
  for (const f of [...Object.values(plans), ...Object.values(bench)]) f.mockClear()
  socket.serverConnects()
})
afterEach(() => {
  stop()
  vi.useRealTimers()
})

const settle = async () => {
  await vi.advanceTimersByTimeAsync(10)
}

describe('routing by event', () => {
  it('when a bar changes from another tab, then the board window reloads once, the bench queue once, the job bag screen once, and nothing else reloads', async () => {
    socket.fire('operation:changed', { id: 40, version: 3, status: 'running', seq: 1, origin: OTHER })
    await settle()
    expect(plans.getBoard).toHaveBeenCalledTimes(1)
    expect(bench.myWork).toHaveBeenCalledTimes(1)
    expect(jobBagKeys).toHaveBeenCalledTimes(1)
    // Only what the event concerns: no plan list, no week load (timeline tab).
    expect(plans.listPlans).not.toHaveBeenCalled()
    expect(plans.getLoad).not.toHaveBeenCalled()
    expect(useBoardStore().flashIds.has(40)).toBe(true)
  })

  it('when a bar is moved by hand in another tab, then the board window and the plan list (whose live plan figures changed) reload once each', async () => {
    socket.fire('plan:changed', { id: 40, operationId: 40, version: 3, seq: 1, origin: OTHER })
    await settle()
    expect(plans.getBoard).toHaveBeenCalledTimes(1)
    expect(plans.listPlans).toHaveBeenCalledTimes(1)
    expect(plans.getLoad).not.toHaveBeenCalled()
  })

  it('when a bench changes (its downtime is part of the calendar), then its store, the board window and the plan list reload, not the bench queue', async () => {
    await useBenchesStore().load()
    benchesApi.listBenches.mockClear()
    socket.fire('masterdata:changed', { entity: 'bench', id: 3, seq: 1 })
    await settle()
    expect(benchesApi.listBenches).toHaveBeenCalled()
    expect(plans.getBoard).toHaveBeenCalledTimes(1)
    // The live plan's findings and figures are stored again on a calendar change: the plan list shows them.
    expect(plans.listPlans).toHaveBeenCalledTimes(1)
    expect(bench.myWork).not.toHaveBeenCalled()
  })

  it('when master data outside the calendar changes (a customer), then the plan list and the bench queue are left alone', async () => {
    socket.fire('masterdata:changed', { entity: 'customer', id: 4, seq: 1 })
    await settle()
    expect(plans.getBoard).toHaveBeenCalledTimes(1)
    expect(plans.listPlans).not.toHaveBeenCalled()
    expect(bench.myWork).not.toHaveBeenCalled()
  })

  it('when a plan is published, then the bench queue refreshes and the board reloads its plan list', async () => {
    socket.fire('plan:published', { id: 5, seq: 1, origin: OTHER })
    await settle()
    expect(bench.myWork).toHaveBeenCalledTimes(1)
    expect(bench.nextForMe).toHaveBeenCalledWith(3)
    expect(plans.listPlans).toHaveBeenCalledTimes(1)
  })

  it('when the bench floor is not on screen, then its queue is left alone', async () => {
    setActivePinia(createPinia())
    stop()
    const s = new FakeSocket()
    stop = startLiveBridge({ channel: new LiveChannel(s), clientId: SELF, debounceMs: 0 }).stop
    s.serverConnects()
    s.fire('plan:published', { id: 5, seq: 1 })
    await settle()
    expect(bench.myWork).not.toHaveBeenCalled()
  })
})

describe('own echo and versions', () => {
  it("when the event is this tab's own echo, then the bench queue (which reloaded with its answer) is not reloaded again; another tab's is", async () => {
    socket.fire('operation:changed', { id: 41, version: 8, seq: 1, origin: SELF })
    await settle()
    expect(bench.myWork).not.toHaveBeenCalled()
    socket.fire('operation:changed', { id: 41, version: 9, seq: 2, origin: OTHER })
    await settle()
    expect(bench.myWork).toHaveBeenCalledTimes(1)
  })

  it('when an event carries a version the store already holds, or an older one, then it is ignored', async () => {
    // The board holds bars 40 (version 2) and 41 (version 7); the bench queue holds the same two.
    socket.fire('operation:changed', { id: 40, version: 2, seq: 1, origin: OTHER })
    socket.fire('operation:changed', { id: 41, version: 6, seq: 2, origin: OTHER })
    await settle()
    expect(plans.getBoard).not.toHaveBeenCalled()
    expect(bench.myWork).not.toHaveBeenCalled()
    // The job bag screen keeps no versions of its own: the bridge's record of versions seen decides for it.
    jobBagKeys.mockClear()
    // A newer version arrives, then the older one late (another instance's broadcast overtaken): only the newer counts.
    socket.fire('jobBag:changed', { id: 12, version: 4, seq: 4 })
    socket.fire('jobBag:changed', { id: 12, version: 3, seq: 3 })
    await settle()
    expect(jobBagKeys).toHaveBeenCalledTimes(1)
  })
})

describe('planner run', () => {
  it('when the socket brings progress and the draft, then the run goes queued → running → drafted, and nothing is polled while connected', async () => {
    plans.startRun.mockResolvedValue(run('queued'))
    const runs = usePlannerRunStore()
    await useBoardStore().startPlanner(10)
    expect(runs.phase).toBe('queued')
    socket.fire('plan:progress', { runId: 'run-1', iteration: 3, weightedTardiness: 120, makespan: 900, elapsedMs: 400 })
    expect(runs.phase).toBe('running')
    expect(runs.progress).toMatchObject({ iteration: 3, elapsedMs: 400 })
    socket.fire('plan:drafted', { id: 77, runId: 'run-1', seq: 1 })
    expect(runs.phase).toBe('drafted')
    expect(runs.run?.planId).toBe(77)
    await vi.advanceTimersByTimeAsync(RUN_POLL_MS * 5)
    expect(plans.getRun).not.toHaveBeenCalled()
  })

  it('when the run fails on whichever instance ran it, then it reads failed with the reason', async () => {
    plans.startRun.mockResolvedValue(run('queued'))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    socket.fire('plan:failed', { runId: 'run-1', error: 'The planner found no plan.', seq: 1 })
    expect(runs.phase).toBe('failed')
    expect(runs.run?.error).toBe('The planner found no plan.')
  })

  it('when the run fails before its start request has answered, then the outcome heard meanwhile still ends it', async () => {
    plans.startRun.mockImplementation(async () => {
      socket.fire('plan:failed', { runId: 'run-1', error: 'Nothing to plan.', seq: 1 })
      return run('queued')
    })
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    expect(runs.phase).toBe('failed')
    expect(runs.run?.error).toBe('Nothing to plan.')
  })

  it('when the socket is down, then the run is polled, and when it is back, then polling stops', async () => {
    plans.startRun.mockResolvedValue(run('queued'))
    plans.getRun.mockResolvedValue(run('running', { progress: { iteration: 9, weightedTardiness: 50, makespan: 800, elapsedMs: 1500 } }))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    socket.drops()
    expect(runs.polling).toBe(true)
    await vi.advanceTimersByTimeAsync(RUN_POLL_MS * 3 + 10)
    expect(plans.getRun).toHaveBeenCalledTimes(3)
    expect(runs.phase).toBe('running')
    expect(runs.progress?.iteration).toBe(9)
    socket.serverConnects()
    expect(runs.polling).toBe(false)
    // One ask on reconnect for the progress missed meanwhile, then none.
    await vi.advanceTimersByTimeAsync(RUN_POLL_MS * 5)
    expect(plans.getRun).toHaveBeenCalledTimes(4)
  })

  it('when the poll finds the draft while disconnected, then the run reads drafted and the draft is shown', async () => {
    plans.startRun.mockResolvedValue(run('queued'))
    plans.getRun.mockResolvedValue(run('done', { planId: 81 }))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    socket.drops()
    await vi.advanceTimersByTimeAsync(RUN_POLL_MS + 10)
    expect(runs.phase).toBe('drafted')
    expect(useBoardStore().viewPlanId).toBe(81)
    await vi.advanceTimersByTimeAsync(RUN_POLL_MS * 3)
    expect(plans.getRun).toHaveBeenCalledTimes(1)
  })
})

describe('planner run that ends without a draft', () => {
  const NOTE = 'No better plan found in 10 s: the live plan stays as it is. The best plan found is 0 h late × priority, the same as the live plan.'

  it('when the socket says the run found no better plan, then it reads no-better with the note, no draft, and the button is free', async () => {
    plans.startRun.mockResolvedValue(run('running'))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    socket.fire('plan:ended', { runId: 'run-1', outcome: 'no-better', note: NOTE, seq: 1 })
    expect(runs.phase).toBe('no-better')
    expect(runs.active).toBe(false)
    expect(runs.run).toMatchObject({ status: 'done', planId: null, note: NOTE })
    expect(useBoardStore().viewPlanId).toBeNull()
  })

  it('when the socket says the run was stopped, then it reads stopped', async () => {
    plans.startRun.mockResolvedValue(run('running'))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    socket.fire('plan:ended', { runId: 'run-1', outcome: 'stopped', seq: 1 })
    expect(runs.phase).toBe('stopped')
    expect(runs.active).toBe(false)
  })

  it('when the run ends with no better plan before its start request has answered, then the outcome heard meanwhile still ends it', async () => {
    plans.startRun.mockImplementation(async () => {
      socket.fire('plan:ended', { runId: 'run-1', outcome: 'no-better', note: NOTE, seq: 1 })
      return run('queued')
    })
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    expect(runs.phase).toBe('no-better')
    expect(runs.run?.note).toBe(NOTE)
  })

  it('when no word of the end comes while connected, then the run is read back once its time limit has passed, and again until it reads as over', async () => {
    plans.startRun.mockResolvedValue(run('running'))
    plans.getRun.mockResolvedValue(run('running'))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    // Nothing asked within the time limit and its grace: the socket is up.
    await vi.advanceTimersByTimeAsync(10_000 + RUN_LATE_GRACE_MS - 10)
    expect(plans.getRun).not.toHaveBeenCalled()
    await vi.advanceTimersByTimeAsync(20)
    expect(plans.getRun).toHaveBeenCalledTimes(1)
    expect(runs.phase).toBe('running')
    plans.getRun.mockResolvedValue(run('done', { note: NOTE }))
    await vi.advanceTimersByTimeAsync(RUN_LATE_POLL_MS)
    expect(plans.getRun).toHaveBeenCalledTimes(2)
    expect(runs.phase).toBe('no-better')
    expect(runs.run?.note).toBe(NOTE)
    await vi.advanceTimersByTimeAsync(RUN_LATE_POLL_MS * 3)
    expect(plans.getRun).toHaveBeenCalledTimes(2)
  })

  it('when Stop is pressed on a run that has already ended with no better plan, then it reads no-better, not drafted', async () => {
    plans.startRun.mockResolvedValue(run('running'))
    plans.stopRun.mockResolvedValue(run('done', { note: NOTE }))
    const runs = usePlannerRunStore()
    await runs.start({ timeLimitSeconds: 10, seed: 1, stability: 'small-changes' })
    await runs.stop()
    expect(runs.phase).toBe('no-better')
    expect(runs.run).toMatchObject({ status: 'done', planId: null, note: NOTE })
    expect(useBoardStore().viewPlanId).toBeNull()
  })
})

describe('reconnect', () => {
  it('when the missed events are replayed after a reconnect, then they go through the same table, once each', async () => {
    socket.fire('jobBag:changed', { id: 99, version: 1, seq: 5 })
    await settle()
    socket.drops()
    socket.serverConnects()
    expect(socket.asks[0]!.seq).toBe(5)
    socket.asks[0]!.ack([{ seq: 6, event: 'jobBag:changed', payload: { id: 12, version: 5, seq: 6 } }])
    await settle()
    expect(jobBagKeys).toHaveBeenCalledTimes(1)
    // Complete replay: no full reload of the plan list.
    expect(plans.listPlans).not.toHaveBeenCalled()
  })
})
