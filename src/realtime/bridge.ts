// The one place socket events become store updates: subscribed once after sign-in, one table from event name to the stores
// it concerns (by id and version, skipping this tab's own echo), and the same table for the events replayed after a reconnect.
import { watch } from 'vue'
import type { EventName } from '@shared/events'
import { acquireLiveChannel, releaseLiveChannel, type LiveChannel } from '@/realtime/socket'
import { CLIENT_ID } from '@/realtime/client-id'
import { createDebounce, type Debounced } from '@/lib/debounce'
import type { RunProgress } from '@shared/schemas/plan'
import { useLiveStore } from '@/stores/live'
import { useBoardStore } from '@/stores/board'
import { useBenchFloorStore } from '@/stores/bench-floor'
import { usePlannerRunStore } from '@/stores/planner-run'
import { useMetalStore } from '@/stores/metal'
import { useBenchesStore } from '@/stores/benches'
import { usePeopleStore } from '@/stores/people'
import { useKindsStore } from '@/stores/operation-kinds'
import { usePauseReasonsStore } from '@/stores/pause-reasons'
import { useRoutingsStore } from '@/stores/routings'
import { useCalendarStore } from '@/stores/calendar'

type Payload = Record<string, unknown>

/** The stores the table updates, and the bridge's debounced reloads. */
export interface BridgeContext {
  live: ReturnType<typeof useLiveStore>
  board: ReturnType<typeof useBoardStore>
  benchFloor: ReturnType<typeof useBenchFloorStore>
  runs: ReturnType<typeof usePlannerRunStore>
  metal: ReturnType<typeof useMetalStore>
  /** Runs `fn` once after a burst (one debounce per name). */
  soon(name: string, fn: () => unknown, wait?: number, maxWait?: number): void
  /** Board bars to highlight after the next board reload. */
  flash: Set<number>
}

/** One store an event concerns. */
export interface LiveRoute {
  /** The store (or the screens' resource keys) it updates: for tests and reading. */
  store: 'board' | 'benchFloor' | 'plannerRun' | 'metal' | 'masterData' | 'keys'
  /** The version this store already holds for the event's id (undefined: it does not hold it); at or above the event's, it is skipped. */
  known?: (p: Payload, c: BridgeContext) => number | undefined
  /** This tab's own writes already reload this store with their answer, so their echo is skipped. */
  ownWritesReload?: boolean
  apply: (p: Payload, c: BridgeContext) => void
}

const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null)
const keysOf = (...keys: (string | null | false)[]) => keys.filter((k): k is string => !!k)

// Board: bars and job bags reload the window only; plan versions reload the plan list; drafts go through the planner run.
const boardBars = (flashOf?: (p: Payload) => number | null): LiveRoute => ({
  store: 'board',
  known: (p, c) => {
    const id = flashOf?.(p)
    return id ? c.board.knownVersion(id) : undefined
  },
  apply: (p, c) => {
    if (!c.live.isShown('board')) return
    const id = flashOf?.(p)
    if (id) c.flash.add(id)
    c.soon(
      'board:bars',
      () => {
        const ids = [...c.flash]
        c.flash.clear()
        return c.board.reloadBars(ids)
      },
      150,
      1000,
    )
  },
})
/** The plan list alone: a move by hand changes the live plan's figures (lateness, finish) that the banner and dialog show. */
const boardVersions: LiveRoute = {
  store: 'board',
  ownWritesReload: true,
  apply: (_p, c) => {
    if (c.live.isShown('board')) c.soon('board:versions', () => c.board.loadVersions(), 150, 1000)
  },
}
/** Master data that carries the calendar the live plan is checked against. */
const CALENDAR_ENTITIES = new Set(['closure', 'workshop', 'bench', 'person'])
const calendarVersions: LiveRoute = {
  ...boardVersions,
  apply: (p, c) => {
    if (CALENDAR_ENTITIES.has(String(p.entity))) boardVersions.apply(p, c)
  },
}
const boardPlans: LiveRoute = {
  store: 'board',
  ownWritesReload: true,
  apply: (_p, c) => {
    if (c.live.isShown('board')) c.soon('board:plans', () => c.board.refresh(), 150, 1000)
  },
}
const benchQueue = (ownWritesReload: boolean, known = false): LiveRoute => ({
  store: 'benchFloor',
  ownWritesReload,
  known: known
    ? (p, c) => {
        const id = num(p.operationId) ?? num(p.id)
        return id ? c.benchFloor.knownVersion(id) : undefined
      }
    : undefined,
  apply: (_p, c) => {
    if (!c.live.isShown('bench-floor') || c.benchFloor.waitingForPin) return
    c.soon('bench', () => c.benchFloor.refresh(), 300, 2000)
  },
})
const metalStore: LiveRoute = {
  store: 'metal',
  apply: (_p, c) => {
    if (c.live.isShown('metal')) c.soon('metal', () => Promise.all([c.metal.loadStock(), c.metal.loadLots()]), 500, 3000)
  },
}
const keys = (of: (p: Payload) => string[]): LiveRoute => ({ store: 'keys', apply: (p, c) => c.live.invalidate(of(p)) })
/**
 * 'live-plan': what the live plan expects of the orders (the order list's Expected column, an order's forecast) may have changed —
 * a plan published, a bar moved or booked, a step or job bag changed (a claim, a start, a finish, a cancelled piece), or the
 * calendar it is checked against. Drafts, money, metal, files and other master data leave it as it is.
 */
const livePlan = keys(() => ['live-plan'])
const calendarLivePlan: LiveRoute = {
  ...livePlan,
  apply: (p, c) => {
    if (CALENDAR_ENTITIES.has(String(p.entity))) livePlan.apply(p, c)
  },
}
const moneyKeys = keys((p) => keysOf('money', num(p.orderId) !== null && `order:${p.orderId}:money`, num(p.quoteId) !== null && `quote:${p.quoteId}:money`))

/** Master data by entity: the store that lists it reloads when it was loaded (a screen showing it). */
const masterData: LiveRoute = {
  store: 'masterData',
  ownWritesReload: true,
  apply: (p, c) => {
    const reload: Record<string, () => unknown> = {
      bench: () => {
        const s = useBenchesStore()
        if (s.loaded) return s.load(true)
      },
      person: () => {
        const s = usePeopleStore()
        if (s.loaded) return s.load(true)
      },
      'operation-kind': () => {
        const s = useKindsStore()
        if (s.loaded) return s.load(true)
      },
      'pause-reason': () => {
        const s = usePauseReasonsStore()
        if (s.loaded) return s.load(true)
      },
      routing: () => {
        const s = useRoutingsStore()
        if (s.loaded) return s.load(true)
      },
      alloy: () => {
        if (c.metal.alloys.length) return c.metal.loadAlloys(true)
      },
      'alloy-price': () => {
        if (c.metal.alloys.length) return c.metal.loadAlloys(true)
      },
      'loss-tolerance': () => {
        if (c.metal.tolerances.length) return c.metal.loadTolerances()
      },
      workshop: () => {
        const s = useCalendarStore()
        if (s.settings) return s.load(true)
      },
      closure: () => {
        const s = useCalendarStore()
        if (s.settings) return s.load(true)
      },
    }
    const entity = String(p.entity ?? '')
    const fn = reload[entity]
    if (fn) c.soon(`md:${entity}`, () => Promise.resolve(fn()).catch(() => undefined), 300, 2000)
    // The bench tablet names its bench from the list of benches.
    if (entity === 'bench' && c.live.isShown('bench-floor')) c.soon('bench:list', () => c.benchFloor.loadBenches().catch(() => undefined), 300, 2000)
  },
}

/** Every event and the stores it concerns. */
export const LIVE_TABLE: Record<EventName, LiveRoute[]> = {
  'operation:changed': [boardBars((p) => num(p.id)), benchQueue(true, true), keys((p) => [`operation:${p.id}`, 'live-plan'])],
  'jobBag:changed': [boardBars(), benchQueue(true), keys((p) => [`jobBag:${p.id}`, 'live-plan'])],
  'plan:changed': [{ ...boardBars((p) => num(p.operationId) ?? num(p.id)), ownWritesReload: true }, boardVersions, benchQueue(false, true), livePlan],
  'plan:published': [boardPlans, benchQueue(false), livePlan],
  'plan:discarded': [boardPlans],
  'plan:drafted': [
    {
      store: 'plannerRun',
      apply: (p, c) => {
        const id = num(p.id)
        if (id) void c.board.onDrafted(id, typeof p.runId === 'string' ? p.runId : undefined)
      },
    },
  ],
  'plan:progress': [{ store: 'plannerRun', apply: (p, c) => c.runs.onProgress(p as unknown as RunProgress & { runId: string }) }],
  'plan:failed': [{ store: 'plannerRun', apply: (p, c) => c.runs.onFailed({ runId: String(p.runId), error: String(p.error ?? '') }) }],
  'plan:ended': [
    {
      store: 'plannerRun',
      apply: (p, c) =>
        c.runs.onEnded({
          runId: String(p.runId),
          outcome: p.outcome === 'stopped' ? 'stopped' : 'no-better',
          note: typeof p.note === 'string' ? p.note : null,
        }),
    },
  ],
  'order:created': [boardBars(), keys(() => ['orders'])],
  'order:updated': [boardBars(), keys((p) => ['orders', `order:${p.id}`])],
  // A calendar change (closures, opening hours, a bench's downtime, someone's leave or hours) stores the live plan's findings and
  // figures again: the board's plan versions reload too; other master data (customers, routings, …) leaves them as they are.
  'masterdata:changed': [boardBars(), calendarVersions, masterData, keys((p) => [`masterdata:${p.entity}`]), calendarLivePlan],
  'file:added': [keys((p) => keysOf(num(p.orderId) !== null && `order:${p.orderId}:files`, num(p.jobBagId) !== null && `jobBag:${p.jobBagId}:files`))],
  'file:removed': [keys((p) => keysOf(num(p.orderId) !== null && `order:${p.orderId}:files`, num(p.jobBagId) !== null && `jobBag:${p.jobBagId}:files`))],
  'metal:recorded': [metalStore, keys((p) => keysOf('metal', num(p.jobBagId) !== null && `metal:jobBag:${p.jobBagId}`))],
  'refiningLot:changed': [metalStore, keys(() => ['metal'])],
  'quote:changed': [keys((p) => ['money', `quote:${p.id}`])],
  'payment:received': [moneyKeys],
  'payment:refunded': [moneyKeys],
  'paymentLink:created': [moneyKeys],
}

/** What a versioned event is about, so an older or repeated version of the same thing is skipped. */
function versionKey(event: string, p: Payload): string | null {
  const id = num(p.id)
  if (id === null || num(p.version) === null) return null
  if (event === 'operation:changed' || event === 'plan:changed') return `operation:${num(p.operationId) ?? id}`
  if (event === 'masterdata:changed') return `${event}:${String(p.entity)}:${id}`
  return `${event.split(':')[0]}:${id}`
}

export interface LiveBridge {
  /** Hands one event to the table (what the channel does for live and replayed events). */
  handle(event: string, payload: Payload): void
  /** Reloads everything shown (after a reconnect whose catch-up could not replay everything). */
  resyncAll(): void
  stop(): void
}

/**
 * Subscribes the stores to the channel once (after sign-in; stop at sign-out). Options are for tests: a channel of
 * their own, another tab id, no debounce wait.
 */
export function startLiveBridge(o: { channel?: LiveChannel; clientId?: string; debounceMs?: number } = {}): LiveBridge {
  const channel = o.channel ?? acquireLiveChannel()
  const clientId = o.clientId ?? CLIENT_ID
  const debouncers = new Map<string, Debounced>()
  const seen = new Map<string, number>()
  const c: BridgeContext = {
    live: useLiveStore(),
    board: useBoardStore(),
    benchFloor: useBenchFloorStore(),
    runs: usePlannerRunStore(),
    metal: useMetalStore(),
    flash: new Set(),
    soon(name, fn, wait = 150, maxWait = 1000) {
      let d = debouncers.get(name)
      if (!d) {
        d = createDebounce(() => void Promise.resolve(fn()).catch(() => undefined), o.debounceMs ?? wait, o.debounceMs ?? maxWait)
        debouncers.set(name, d)
      }
      d()
    },
  }

  function handle(event: string, payload: Payload) {
    const routes = LIVE_TABLE[event as EventName]
    if (!routes) return
    const version = num(payload.version)
    const vKey = versionKey(event, payload)
    if (vKey && version !== null) {
      if ((seen.get(vKey) ?? -Infinity) >= version) return
      seen.set(vKey, version)
      if (seen.size > 2000) seen.delete(seen.keys().next().value!)
    }
    const own = payload.origin === clientId
    for (const r of routes) {
      if (own && r.ownWritesReload) continue
      if (version !== null && r.known) {
        const have = r.known(payload, c)
        if (have !== undefined && have >= version) continue
      }
      r.apply(payload, c)
    }
  }

  function resyncAll() {
    for (const d of debouncers.values()) d.cancel()
    c.flash.clear()
    if (c.live.isShown('board')) void c.board.refresh().catch(() => undefined)
    if (c.live.isShown('bench-floor') && !c.benchFloor.waitingForPin) void c.benchFloor.refresh().catch(() => undefined)
    if (c.live.isShown('metal')) void Promise.all([c.metal.loadStock(), c.metal.loadLots()]).catch(() => undefined)
    c.live.invalidateAll()
  }

  const offs = [
    ...(Object.keys(LIVE_TABLE) as EventName[]).map((e) => channel.on(e, (p) => handle(e, p))),
    // Missed events were replayed through the table above; reload everything only when some could not be.
    channel.onResync((_missed, complete) => {
      if (!complete) resyncAll()
    }),
  ]
  c.live.connection = channel.state.value
  const stopState = watch(channel.state, (s) => (c.live.connection = s), { flush: 'sync' })

  let stopped = false
  return {
    handle,
    resyncAll,
    stop() {
      if (stopped) return
      stopped = true
      offs.forEach((off) => off())
      stopState()
      for (const d of debouncers.values()) d.cancel()
      c.live.connection = 'offline'
      if (!o.channel) releaseLiveChannel(channel)
    },
  }
}
