// The planning board: the window shown, board data (live plan or a draft), plan versions, planner runs, moves by hand and the week load.
import { defineStore } from 'pinia'
import { computed, ref, shallowRef, toRef } from 'vue'
import * as plansApi from '@/api/plans'
import type { BoardData, BoardItem, JobState, PlanComparison, PlanMove, PlanRun, PlanVersion, RunProgress, WeekLoad } from '@/api/plans'
import { usePlannerRunStore } from '@/stores/planner-run'
import type { MoveInput } from '@shared/schemas/plan'
import { ApiError } from '@/api/client'
import { messageOf } from '@/composables/use-api-error'
import { dataWindowFor, dayStart, localDay, openingDay, shiftAnchor, workWhileShut, type ColourBy, type RowsBy, type Zoom } from '@/lib/board-calendar'

export type BoardTab = 'timeline' | 'load'

/** Outcome of a move or pin: saved, refused with the rule's reason (422), or stale (409, reloaded). */
export type MoveOutcome = { ok: true } | { ok: false; kind: 'refused' | 'stale' | 'error'; message: string; rule?: string }

export const useBoardStore = defineStore('board', () => {
  /** The workshop's zone, from the last board answer (the server's calendar). */
  const timeZone = ref('Europe/London')
  /** The day the view is centred on (workshop calendar day). */
  const anchorDay = ref(localDay(new Date(), timeZone.value))
  /** Set when the board opens and on "Today": once the workshop's hours are loaded, the anchor goes to the day it next works. */
  let seekOpening = true
  /** Counts the anchor moves made that way, for the view to show the new range. */
  const openingMoves = ref(0)
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
  /** The planner run started from this board, and its latest figures (the planner-run store's state machine). */
  const runs = usePlannerRunStore()
  const run = toRef(runs, 'run')
  const progress = toRef(runs, 'progress')
  /** Bars just changed by someone else, highlighted for a moment after the reload that brought them. */
  const flashIds = ref<Set<number>>(new Set())
  let flashTimer: ReturnType<typeof setTimeout> | null = null

  const dataWindow = computed(() => dataWindowFor(anchorDay.value))
  const livePlan = computed(() => versions.value.find((v) => v.status === 'published') ?? null)
  /** The newest draft still waiting for a decision. */
  const pendingDraft = computed(() => versions.value.find((v) => v.status === 'draft') ?? null)
  /**
   * The plan compared with the live plan: the draft shown on the board, else the draft waiting for a decision — its banner says
   * what it would move and buy whether or not it is shown (after a reload too).
   */
  const comparedPlanId = computed(() => viewPlanId.value ?? pendingDraft.value?.id ?? null)
  const viewedPlan = computed(() => (viewPlanId.value ? (versions.value.find((v) => v.id === viewPlanId.value) ?? null) : null))
  /**
   * The draft the banner speaks for, and that its Publish and Throw away act on: the draft shown on the board (with two or more
   * waiting, the manager may show an older one), else the newest draft waiting.
   */
  const bannerDraft = computed(() => (viewedPlan.value?.status === 'draft' ? viewedPlan.value : pendingDraft.value))
  const itemsById = computed(() => new Map((data.value?.items ?? []).map((i) => [i.id, i])))
  const jobStates = computed(() => new Map<number, JobState>((data.value?.jobs ?? []).map((j) => [j.jobBagId, j.state])))
  const moved = computed(
    () =>
      new Map<number, PlanMove['change']>(
        (viewPlanId.value && comparison.value?.planId === viewPlanId.value ? comparison.value.moves : []).map((m) => [m.operationId, m.change]),
      ),
  )
  const benchName = computed(() => new Map((data.value?.benches ?? []).map((b) => [b.id, b.name])))
  const personName = computed(() => new Map((data.value?.people ?? []).map((p) => [p.id, p.name])))
  const running = computed(() => runs.active)

  /**
   * The day the board opens on with these weeks loaded: today, or, while the workshop is shut, the day it next works — unless
   * someone works today while it is shut (their own hours, a time record, a step planned then), which the board shows.
   */
  const openingFor = (now: Date, d: BoardData) => {
    const tz = d.window.timeZone
    return openingDay(now, tz, d.nonWorking, { until: dayStart(d.window.to, tz), worked: () => workWhileShut(d, tz) })
  }

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
      if (seekOpening) {
        // Opened (or "Today" pressed) while the workshop is shut: settle on the day it next works before anything is drawn.
        seekOpening = false
        const day = openingFor(new Date(), d)
        if (day !== anchorDay.value) {
          const before = dataWindow.value.from
          anchorDay.value = day
          openingMoves.value++
          if (dataWindow.value.from !== before) {
            if (tab.value === 'load') void loadWeekLoad().catch(() => undefined)
            return loadBoard()
          }
        }
      }
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

  /** The plan list; with `compare` (the default), the comparison of a draft newly waiting for a decision too. */
  async function loadVersions(compare = true) {
    versions.value = await plansApi.listPlans()
    // Stop showing a draft that is no longer one.
    if (viewPlanId.value && !versions.value.some((v) => v.id === viewPlanId.value && v.status === 'draft')) {
      viewPlanId.value = null
      comparison.value = null
    }
    const id = comparedPlanId.value
    if (compare && id && comparison.value?.planId !== id) await loadComparison(id).catch(() => undefined)
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
    const versionsRead = loadVersions(false).catch(() => undefined)
    const tasks: Promise<unknown>[] = [versionsRead.then(() => loadBoard())]
    if (tab.value === 'load') tasks.push(loadWeekLoad().catch(() => undefined))
    // The draft shown, else the draft waiting for a decision (known once the list is read): compared again, the live plan may
    // have changed.
    if (viewPlanId.value) tasks.push(loadComparison(viewPlanId.value).catch(() => undefined))
    else tasks.push(versionsRead.then(() => (comparedPlanId.value ? loadComparison(comparedPlanId.value) : undefined)).catch(() => undefined))
    await Promise.all(tasks)
  }

  /** Live: bars or job bags changed (operation:changed, plan:changed, jobBag:changed): the window (and the week load when shown) again. */
  async function reloadBars(flash: readonly number[] = []) {
    await Promise.all([loadBoard(), tab.value === 'load' ? loadWeekLoad().catch(() => undefined) : Promise.resolve()])
    if (!flash.length) return
    flashIds.value = new Set(flash)
    if (flashTimer) clearTimeout(flashTimer)
    flashTimer = setTimeout(() => (flashIds.value = new Set()), 1800)
  }

  /** The version of a bar (operation) the board holds, if it shows it: an event at or below it is already here. */
  const knownVersion = (operationId: number): number | undefined => itemsById.value.get(operationId)?.version

  /** A plan against the live plan (or `against`); kept for the board only when it is the plan compared there (comparedPlanId). */
  async function loadComparison(planId: number, against?: number) {
    const c = await plansApi.comparePlan(planId, against)
    if (!against && planId === comparedPlanId.value) comparison.value = c
    return c
  }

  function setAnchor(day: string) {
    const before = dataWindow.value.from
    anchorDay.value = day
    if (dataWindow.value.from !== before) void refreshWindow()
  }
  /** One step back or forward at the zoom; day by day, over the days `shown` leaves out (by default the weekend). */
  const step = (direction: -1 | 1, shown?: (day: string) => boolean) => setAnchor(shiftAnchor(anchorDay.value, zoom.value, direction, shown))
  /** Today, or the day the workshop next works when it is shut now (read from the loaded weeks when they hold now, else once loaded). */
  const today = () => {
    const now = new Date()
    const d = data.value
    const day = localDay(now, timeZone.value)
    if (d && d.window.from <= day && day <= d.window.to) {
      setAnchor(openingFor(now, d))
      return
    }
    seekOpening = true
    setAnchor(day)
  }
  async function refreshWindow() {
    await Promise.all([loadBoard(), tab.value === 'load' ? loadWeekLoad().catch(() => undefined) : Promise.resolve()])
  }

  /** Shows a draft on the board (read-only) with what it would move highlighted; null goes back to the live plan. */
  async function showPlan(planId: number | null) {
    viewPlanId.value = planId
    // Back to the live plan, the waiting draft's comparison stays for its banner.
    const compared = comparedPlanId.value
    if (comparison.value?.planId !== compared) comparison.value = null
    await Promise.all([
      loadBoard(),
      compared ? loadComparison(compared).catch(() => undefined) : Promise.resolve(),
      tab.value === 'load' ? loadWeekLoad().catch(() => undefined) : Promise.resolve(),
    ])
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

  /** Starts the planner with a time budget; the planner-run store follows it (socket events, polling while disconnected). */
  function startPlanner(timeLimitSeconds: number, stability: PlanRun['stability'] = 'small-changes', seed = Math.floor(Math.random() * 1_000_000)) {
    return runs.start({ timeLimitSeconds, seed, stability })
  }
  const stopPlanner = () => runs.stop()
  const onProgress = (p: RunProgress & { runId: string }) => runs.onProgress(p)
  const onFailed = (p: { runId: string; error: string }) => runs.onFailed(p)
  const clearRun = () => runs.clear()

  /** A draft was saved (ours or another manager's): list it; our own run's draft is shown with its moves. */
  async function onDrafted(planId: number, runId?: string) {
    const ours = runs.onDrafted(planId, runId)
    const willShow = ours && viewPlanId.value !== planId
    // Another manager's draft (or ours already shown) is compared with the list; ours is compared when shown.
    await loadVersions(!willShow).catch(() => undefined)
    if (willShow) await showPlan(planId)
  }
  runs.setAfterDrafted(onDrafted)

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
      if (err instanceof ApiError && err.status === 422)
        outcome = { ok: false, kind: 'refused', message: err.message, rule: (err.details as { rule?: string } | undefined)?.rule }
      else if (err instanceof ApiError && err.status === 409)
        outcome = {
          ok: false,
          kind: 'stale',
          message: `Someone else changed “${item.name}” of ${item.jobBagNumber} a moment ago; the board now shows the latest plan.`,
        }
      else if (err instanceof ApiError && err.status === 400) {
        const [field, reason] = Object.entries(err.fields)[0] ?? []
        outcome = { ok: false, kind: 'refused', message: field ? `${field}: ${reason}` : err.message }
      } else outcome = { ok: false, kind: 'error', message: messageOf(err) }
    }
    settle?.(outcome.ok)
    // The live plan's figures (in the version list) change with a move as well as its bars.
    if (outcome.ok || (!outcome.ok && outcome.kind === 'stale')) await Promise.all([loadBoard(), loadVersions().catch(() => undefined)])
    return outcome
  }

  const setPinned = (item: BoardItem, pinned: boolean) => move(item, { pinned, version: item.version })

  return {
    timeZone,
    anchorDay,
    openingMoves,
    zoom,
    rowsBy,
    colourBy,
    workingHoursOnly,
    tab,
    data,
    loading,
    error,
    viewPlanId,
    comparison,
    versions,
    weekLoad,
    loadLoading,
    run,
    progress,
    flashIds,
    dataWindow,
    livePlan,
    pendingDraft,
    viewedPlan,
    bannerDraft,
    itemsById,
    jobStates,
    moved,
    benchName,
    personName,
    running,
    loadBoard,
    loadVersions,
    loadWeekLoad,
    refresh,
    reloadBars,
    knownVersion,
    loadComparison,
    setAnchor,
    step,
    today,
    showPlan,
    publish,
    discard,
    startPlanner,
    stopPlanner,
    onProgress,
    onDrafted,
    onFailed,
    clearRun,
    move,
    setPinned,
  }
})
