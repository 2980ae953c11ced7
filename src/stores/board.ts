// The planning board: the window shown, board data (live plan or a draft), plan versions, planner runs, moves by hand and the week load.
import { defineStore } from 'pinia'
import { computed, ref, shallowRef } from 'vue'
import * as plansApi from '@/api/plans'
import { runActive } from '@/api/plans'
import type { BoardData, BoardItem, JobState, PlanComparison, PlanMove, PlanRun, PlanVersion, RunProgress, WeekLoad } from '@/api/plans'
import type { MoveInput } from '@shared/schemas/plan'
import { ApiError } from '@/api/client'
import { messageOf } from '@/composables/use-api-error'
import { dataWindowFor, localDay, shiftAnchor, type ColourBy, type RowsBy, type Zoom } from '@/components/board/board-vis'

export type BoardTab = 'timeline' | 'load'

/** Outcome of a move or pin: saved, refused with the rule's reason (422), or stale (409, reloaded). */
export type MoveOutcome = { ok: true } | { ok: false; kind: 'refused' | 'stale' | 'error'; message: string; rule?: string }

export const useBoardStore = defineStore('board', () => {
  /** The workshop's zone, from the last board answer (the server's calendar). */
  const timeZone = ref('Europe/London')
  /** The day the view is centred on (workshop calendar day). */
  const anchorDay = ref(localDay(new Date(), timeZone.value))
  const zoom = ref<Zoom>('week')
  const rowsBy = ref<RowsBy>('bench')
  const colourBy = ref<ColourBy>('kind')
  /** Fold nights and weekends away so working hours get the width. */
  const workingHoursOnly = ref(true)
  const tab = ref<BoardTab>('timeline')

  /** The board window as loaded (shallow: replaced whole on every reload). */
  const data = shallowRef<BoardData | null>(null)
  const loading = ref(false)
  const error = ref<string | null>(null)
  /** A draft shown instead of the live plan, or null. */
  const viewPlanId = ref<number | null>(null)
  const comparison = shallowRef<PlanComparison | null>(null)
  const versions = ref<PlanVersion[]>([])
  const weekLoad = shallowRef<WeekLoad | null>(null)
  const loadLoading = ref(false)
  /** The planner run started from this board, and its latest figures. */
  const run = ref<PlanRun | null>(null)
  const progress = ref<RunProgress | null>(null)

  const dataWindow = computed(() => dataWindowFor(anchorDay.value))
  const livePlan = computed(() => versions.value.find((v) => v.status === 'published') ?? null)
  /** The newest draft still waiting for a decision. */
  const pendingDraft = computed(() => versions.value.find((v) => v.status === 'draft') ?? null)
  const viewedPlan = computed(() => (viewPlanId.value ? (versions.value.find((v) => v.id === viewPlanId.value) ?? null) : null))
  const itemsById = computed(() => new Map((data.value?.items ?? []).map((i) => [i.id, i])))
  const jobStates = computed(() => new Map<number, JobState>((data.value?.jobs ?? []).map((j) => [j.jobBagId, j.state])))
  const moved = computed(() => new Map<number, PlanMove['change']>((viewPlanId.value && comparison.value?.planId === viewPlanId.value ? comparison.value.moves : []).map((m) => [m.operationId, m.change])))
  const benchName = computed(() => new Map((data.value?.benches ?? []).map((b) => [b.id, b.name])))
  const personName = computed(() => new Map((data.value?.people ?? []).map((p) => [p.id, p.name])))
  const running = computed(() => runActive(run.value))

  // Reloads may overlap (events, window changes): only the newest answer is kept.
  let boardGen = 0
  let loadGen = 0

  /** Loads the board window (live plan, or the draft being viewed). */
  async function loadBoard() {
    const gen = ++boardGen
    loading.value = true
    try {
      const d = await plansApi.getBoard({ ...dataWindow.value, planId: viewPlanId.value ?? undefined })
      if (gen !== boardGen) return
      data.value = d
      timeZone.value = d.window.timeZone
      error.value = null
    } catch (err) {
      if (gen !== boardGen) return
      // A draft that was published or thrown away meanwhile: back to the live plan.
      if (viewPlanId.value && err instanceof ApiError && err.status === 404) {
        viewPlanId.value = null
        return loadBoard()
      }
      error.value = messageOf(err)
    } finally {
      if (gen === boardGen) loading.value = false
    }
  }

  async function loadVersions() {
    versions.value = await plansApi.listPlans()
    // Stop showing a draft that is no longer one.
    if (viewPlanId.value && !versions.value.some((v) => v.id === viewPlanId.value && v.status === 'draft')) {
      viewPlanId.value = null
      comparison.value = null
    }
  }

  async function loadWeekLoad() {
    const gen = ++loadGen
    loadLoading.value = true
    try {
      const l = await plansApi.getLoad({ ...dataWindow.value, planId: viewPlanId.value ?? undefined })
      if (gen === loadGen) weekLoad.value = l
    } finally {
      if (gen === loadGen) loadLoading.value = false
    }
  }

  /** Everything the board shows, e.g. after a change event. */
  async function refresh() {
    const tasks: Promise<unknown>[] = [loadVersions().catch(() => undefined).then(() => loadBoard())]
    if (tab.value === 'load') tasks.push(loadWeekLoad().catch(() => undefined))
    if (viewPlanId.value) tasks.push(loadComparison(viewPlanId.value).catch(() => undefined))
    await Promise.all(tasks)
  }

  async function loadComparison(planId: number, against?: number) {
    const c = await plansApi.comparePlan(planId, against)
    if (!against) comparison.value = c
    return c
  }

  function setAnchor(day: string) {
    const before = dataWindow.value.from
    anchorDay.value = day
    if (dataWindow.value.from !== before) void refreshWindow()
  }
  const step = (direction: -1 | 1) => setAnchor(shiftAnchor(anchorDay.value, zoom.value, direction))
  const today = () => setAnchor(localDay(new Date(), timeZone.value))
  async function refreshWindow() {
    await Promise.all([loadBoard(), tab.value === 'load' ? loadWeekLoad().catch(() => undefined) : Promise.resolve()])
  }

  /** Shows a draft on the board (read-only) with what it would move highlighted; null goes back to the live plan. */
  async function showPlan(planId: number | null) {
    viewPlanId.value = planId
    comparison.value = null
    await Promise.all([loadBoard(), planId ? loadComparison(planId).catch(() => undefined) : Promise.resolve(), tab.value === 'load' ? loadWeekLoad().catch(() => undefined) : Promise.resolve()])
  }

  async function publish(planId: number) {
    const p = await plansApi.publishPlan(planId)
    viewPlanId.value = null
    comparison.value = null
    await refresh()
    return p
  }

  async function discard(planId: number) {
    const p = await plansApi.discardPlan(planId)
    if (viewPlanId.value === planId) {
      viewPlanId.value = null
      comparison.value = null
    }
    await refresh()
    return p
  }

  /** Starts the planner with a time budget; progress comes by socket events and by polling the run as a fallback. */
  async function startPlanner(timeLimitSeconds: number, stability: PlanRun['stability'] = 'small-changes', seed = Math.floor(Math.random() * 1_000_000)) {
    progress.value = null
    run.value = await plansApi.startRun({ timeLimitSeconds, seed, stability })
    void followRun(run.value.id)
    return run.value
  }

  async function followRun(runId: string) {
    while (run.value?.id === runId && runActive(run.value)) {
      await new Promise((r) => setTimeout(r, 700))
      try {
        const r = await plansApi.getRun(runId)
        if (run.value?.id !== runId) return
        run.value = r
        if (r.progress && (!progress.value || r.progress.elapsedMs >= progress.value.elapsedMs)) progress.value = r.progress
      } catch {
        // The socket still brings the result; keep polling gently.
      }
    }
    if (run.value?.id === runId && run.value.status === 'done' && run.value.planId) await onDrafted(run.value.planId, runId)
  }

  async function stopPlanner() {
    if (runActive(run.value)) run.value = await plansApi.stopRun(run.value!.id)
  }

  function onProgress(p: RunProgress & { runId: string }) {
    if (run.value?.id !== p.runId) return
    if (!progress.value || p.elapsedMs >= progress.value.elapsedMs) progress.value = { iteration: p.iteration, weightedTardiness: p.weightedTardiness, makespan: p.makespan, elapsedMs: p.elapsedMs }
  }

  /** A draft was saved (ours or another manager's): list it; our own run's draft is shown with its moves. */
  async function onDrafted(planId: number, runId?: string) {
    const ours = run.value && (!runId || run.value.id === runId)
    if (ours && run.value && runActive(run.value)) run.value = { ...run.value, status: 'done', planId }
    await loadVersions().catch(() => undefined)
    if (ours && viewPlanId.value !== planId) await showPlan(planId)
  }

  /** A run ended with an error (on whichever instance ran it): ours shows the reason at once, without waiting for the poll. */
  function onFailed(p: { runId: string; error: string }) {
    if (run.value?.id === p.runId && runActive(run.value)) run.value = { ...run.value, status: 'failed', error: p.error }
  }

  function clearRun() {
    run.value = null
    progress.value = null
  }

  /**
   * Saves a move (or pin) of one bar on the live plan; a refusal carries the rule's reason, a stale version reloads.
   * `settle` runs before the reload so the timeline can accept or revert the drag first.
   */
  async function move(item: BoardItem, body: MoveInput, settle?: (ok: boolean) => void): Promise<MoveOutcome> {
    let outcome: MoveOutcome
    try {
      await plansApi.moveOperation(item.id, body)
      outcome = { ok: true }
    } catch (err) {
      if (err instanceof ApiError && err.status === 422) outcome = { ok: false, kind: 'refused', message: err.message, rule: (err.details as { rule?: string } | undefined)?.rule }
      else if (err instanceof ApiError && err.status === 409) outcome = { ok: false, kind: 'stale', message: `Someone else changed “${item.name}” of ${item.jobBagNumber} a moment ago; the board now shows the latest plan.` }
      else if (err instanceof ApiError && err.status === 400) {
        const [field, reason] = Object.entries(err.fields)[0] ?? []
        outcome = { ok: false, kind: 'refused', message: field ? `${field}: ${reason}` : err.message }
      } else outcome = { ok: false, kind: 'error', message: messageOf(err) }
    }
    settle?.(outcome.ok)
    if (outcome.ok || (!outcome.ok && outcome.kind === 'stale')) await loadBoard()
    return outcome
  }

  const setPinned = (item: BoardItem, pinned: boolean) => move(item, { pinned, version: item.version })

  return {
    timeZone, anchorDay, zoom, rowsBy, colourBy, workingHoursOnly, tab,
    data, loading, error, viewPlanId, comparison, versions, weekLoad, loadLoading, run, progress,
    dataWindow, livePlan, pendingDraft, viewedPlan, itemsById, jobStates, moved, benchName, personName, running,
    loadBoard, loadVersions, loadWeekLoad, refresh, loadComparison, setAnchor, step, today, showPlan, publish, discard,
    startPlanner, stopPlanner, onProgress, onDrafted, onFailed, clearRun, move, setPinned,
  }
})
