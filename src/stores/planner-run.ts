// The planner run started from this tab, as one state machine: queued → running → drafted / no-better / failed / stopped, driven
// by the socket's plan:progress, plan:drafted, plan:ended and plan:failed, by polling the run while the socket is disconnected,
// and by reading it back once its time limit has passed without word of its end (an event lost on the way).
import { defineStore } from 'pinia'
import { computed, ref, watch } from 'vue'
import * as plansApi from '@/api/plans'
import { runActive } from '@/api/plans'
import type { PlanRun, RunProgress } from '@/api/plans'
import type { PlanRunInput } from '@shared/schemas/plan'
import { useLiveStore } from '@/stores/live'

/** no-better: the run ended without a draft because nothing beat the live plan, which stays as it is. */
export type RunPhase = 'idle' | 'queued' | 'running' | 'drafted' | 'no-better' | 'failed' | 'stopped'

/** How often the run is asked for while the socket is down. */
export const RUN_POLL_MS = 700
/** After the run's time limit, how long its end may take to be heard (saving a draft) before the run is read back. */
export const RUN_LATE_GRACE_MS = 2000
/** How often a run that is past its time limit, and not heard of, is read back (say it waited in the queue). */
export const RUN_LATE_POLL_MS = 3000

const PHASE: Record<PlanRun['status'], RunPhase> = { queued: 'queued', running: 'running', done: 'drafted', failed: 'failed', cancelled: 'stopped' }
const phaseOf = (r: PlanRun): RunPhase => (r.status === 'done' && !r.planId ? 'no-better' : PHASE[r.status])

/** What was heard of a run before it was known as ours. */
interface Heard {
  planId?: number
  error?: string
  ended?: { outcome: 'no-better' | 'stopped'; note: string | null }
}

export const usePlannerRunStore = defineStore('plannerRun', () => {
  const live = useLiveStore()
  const run = ref<PlanRun | null>(null)
  const progress = ref<RunProgress | null>(null)
  const phase = computed<RunPhase>(() => (run.value ? phaseOf(run.value) : 'idle'))
  const active = computed(() => runActive(run.value))
  /** True while the fallback poll is scheduled (the socket is down and the run is not over). */
  const polling = ref(false)
  /** Told when our run's draft is known from the poll (the board lists and shows it, as for the socket event). */
  let afterDrafted: ((planId: number, runId: string) => unknown) | null = null
  let timer: ReturnType<typeof setTimeout> | null = null
  /** Reads the run back once its time limit has passed, while no word of its end has come. */
  let lateTimer: ReturnType<typeof setTimeout> | null = null
  /** Outcomes heard for runs not (yet) ours: a run that ends before its start request has answered is still caught. */
  const early = new Map<string, Heard>()

  function remember(runId: string, outcome: Heard) {
    early.set(runId, outcome)
    if (early.size > 20) early.delete(early.keys().next().value!)
  }

  async function start(body: PlanRunInput) {
    progress.value = null
    run.value = await plansApi.startRun(body)
    const heard = early.get(run.value.id)
    if (heard?.planId) {
      onDrafted(heard.planId, run.value.id)
      void afterDrafted?.(heard.planId, run.value.id)
    } else if (heard?.error !== undefined) onFailed({ runId: run.value.id, error: heard.error })
    else if (heard?.ended) onEnded({ runId: run.value.id, ...heard.ended })
    early.clear()
    schedule()
    scheduleLate(run.value.timeLimitSeconds * 1000 + RUN_LATE_GRACE_MS)
    return run.value
  }

  async function stop() {
    if (active.value) apply(await plansApi.stopRun(run.value!.id))
  }

  function clear() {
    cancelPoll()
    cancelLate()
    run.value = null
    progress.value = null
  }

  /** plan:progress (any planner's run; only ours counts): a queued run is running now. */
  function onProgress(p: RunProgress & { runId: string }) {
    if (run.value?.id !== p.runId || !active.value) return
    if (run.value.status === 'queued') run.value = { ...run.value, status: 'running' }
    if (!progress.value || p.elapsedMs >= progress.value.elapsedMs)
      progress.value = {
        iteration: p.iteration,
        weightedTardiness: p.weightedTardiness,
        makespan: p.makespan,
        elapsedMs: p.elapsedMs,
        ...(p.stage ? { stage: p.stage } : {}),
      }
  }

  /** plan:drafted: returns whether the draft is our run's (a draft without a run id while ours runs counts as ours). */
  function onDrafted(planId: number, runId?: string): boolean {
    const ours = !!run.value && (!runId || run.value.id === runId)
    if (!ours && runId) remember(runId, { planId })
    if (ours && active.value) run.value = { ...run.value!, status: 'done', planId }
    return ours
  }

  /** plan:failed: ours shows the reason at once; a run already over keeps its outcome. */
  function onFailed(p: { runId: string; error: string }) {
    if (run.value?.id === p.runId && active.value) run.value = { ...run.value, status: 'failed', error: p.error }
    else if (run.value?.id !== p.runId) remember(p.runId, { error: p.error })
  }

  /** plan:ended: ours ended without a draft — nothing beat the live plan (its note says so), or it was stopped. */
  function onEnded(p: { runId: string; outcome: 'no-better' | 'stopped'; note: string | null }) {
    if (run.value?.id === p.runId && active.value)
      run.value =
        p.outcome === 'stopped' ? { ...run.value, status: 'cancelled' } : { ...run.value, status: 'done', planId: null, note: p.note ?? run.value.note }
    else if (run.value?.id !== p.runId) remember(p.runId, { ended: { outcome: p.outcome, note: p.note } })
  }

  /** An answer of GET /plans/runs/:id (poll, stop, catch-up after a reconnect). */
  function apply(r: PlanRun) {
    if (run.value?.id !== r.id || !active.value) return
    run.value = r
    if (r.progress && (!progress.value || r.progress.elapsedMs >= progress.value.elapsedMs)) progress.value = r.progress
    if (r.status === 'done' && r.planId) void afterDrafted?.(r.planId, r.id)
  }

  async function fetchRun() {
    const id = run.value?.id
    if (!id) return
    try {
      apply(await plansApi.getRun(id))
    } catch {
      // Asked again at the next poll, or the socket brings the outcome.
    }
  }

  function schedule() {
    if (timer || !active.value || live.connected) return
    polling.value = true
    timer = setTimeout(async () => {
      timer = null
      if (!active.value || live.connected) return cancelPoll()
      await fetchRun()
      polling.value = false
      schedule()
    }, RUN_POLL_MS)
  }

  function cancelPoll() {
    if (timer) clearTimeout(timer)
    timer = null
    polling.value = false
  }

  /** Once the run should be over, asks for it (again every few seconds while it still reads as going). */
  function scheduleLate(ms: number) {
    cancelLate()
    if (!active.value) return
    const id = run.value!.id
    lateTimer = setTimeout(async () => {
      lateTimer = null
      if (!active.value || run.value?.id !== id) return
      // While the socket is down the poll above asks already.
      if (live.connected) await fetchRun()
      if (run.value?.id === id) scheduleLate(RUN_LATE_POLL_MS)
    }, ms)
  }

  function cancelLate() {
    if (lateTimer) clearTimeout(lateTimer)
    lateTimer = null
  }

  // The socket going down starts the poll; coming back stops it and asks once for what progress was missed.
  watch(
    () => live.connected,
    (connected, was) => {
      if (!connected) return schedule()
      cancelPoll()
      if (!was && active.value) void fetchRun()
    },
    { flush: 'sync' },
  )

  function setAfterDrafted(fn: typeof afterDrafted) {
    afterDrafted = fn
  }

  return { run, progress, phase, active, polling, start, stop, clear, onProgress, onDrafted, onFailed, onEnded, apply, fetchRun, setAfterDrafted }
})
