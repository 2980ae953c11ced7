// The bench tablet's state: which bench this is (remembered on the device), next for me, my work, and replay-safe transitions.
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { BenchOperation, TransitionResult } from '@shared/schemas/bench-floor'
import type { Bench } from '@shared/schemas/bench'
import { ApiError } from '@/api/client'
import { listBenches } from '@/api/benches'
import * as benchApi from '@/api/bench-floor'

const BENCH_KEY = 'millgrain.bench'

export const useBenchFloorStore = defineStore('benchFloor', () => {
  /** The bench this tablet stands at (chosen once, kept in localStorage). */
  const benchId = ref<number | null>(Number(localStorage.getItem(BENCH_KEY)) || null)
  /** Every active bench of the workshop. */
  const benches = ref<Bench[]>([])
  /** Ready operations this person can do here, in plan order. */
  const next = ref<BenchOperation[]>([])
  /** What this person has claimed, running or paused. */
  const mine = ref<BenchOperation[]>([])
  const person = ref<{ id: number; name: string } | null>(null)
  const loading = ref(false)
  /** Operation ids with a request on its way (buttons show busy). */
  const busy = ref(new Set<number>())
  const bench = computed(() => benches.value.find((b) => b.id === benchId.value) ?? null)
  /** On a bench station: called after each action, and when the server says the PIN has run out (the next person enters theirs). */
  const afterAction = ref<(() => void) | null>(null)
  /** On a bench station between people: there is no queue of anyone's to show, so live events do not reload it. */
  const waitingForPin = ref(false)

  /** The version of an operation the lists hold, if they show it: an event at or below it is already here. */
  const knownVersion = (operationId: number): number | undefined =>
    (next.value.find((o) => o.id === operationId) ?? mine.value.find((o) => o.id === operationId))?.version

  async function loadBenches() {
    benches.value = (await listBenches()).filter((b) => b.active)
    if (benchId.value && !benches.value.some((b) => b.id === benchId.value)) chooseBench(null)
  }

  /** Remembers this tablet's bench. */
  function chooseBench(id: number | null) {
    benchId.value = id
    if (id) localStorage.setItem(BENCH_KEY, String(id))
    else localStorage.removeItem(BENCH_KEY)
  }

  /** Reloads both lists. */
  async function refresh() {
    loading.value = true
    try {
      const [m, n] = await Promise.all([benchApi.myWork(), benchId.value ? benchApi.nextForMe(benchId.value) : Promise.resolve(null)])
      mine.value = m.items
      person.value = m.person
      next.value = n?.items ?? []
    } finally {
      loading.value = false
    }
  }

  /**
   * Sends one transition. The request id is made once per tap; when the connection drops the same id is sent again,
   * so the server answers with its first answer instead of doing the work twice.
   */
  async function act(
    op: Pick<BenchOperation, 'id'>,
    action: benchApi.BenchAction,
    extra: Omit<benchApi.TransitionBody, 'requestId'> = {},
  ): Promise<TransitionResult> {
    const body: benchApi.TransitionBody = { requestId: benchApi.newRequestId(), ...extra }
    if ((action === 'claim' || action === 'start' || action === 'resume') && benchId.value && !body.benchId) body.benchId = benchId.value
    busy.value = new Set([...busy.value, op.id])
    try {
      for (let attempt = 0; ; attempt++) {
        try {
          const r = await benchApi.transition(op.id, action, body)
          if (afterAction.value) afterAction.value()
          else await refresh().catch(() => undefined)
          return r
        } catch (err) {
          if (err instanceof ApiError && err.code === 'network' && attempt < 4) {
            await new Promise((res) => setTimeout(res, 800 * (attempt + 1)))
            continue
          }
          if (err instanceof ApiError && err.status === 403 && (err.details as { reason?: string } | undefined)?.reason === 'bench-pin' && afterAction.value)
            afterAction.value()
          else if (err instanceof ApiError && err.status !== 0) await refresh().catch(() => undefined)
          throw err
        }
      }
    } finally {
      const s = new Set(busy.value)
      s.delete(op.id)
      busy.value = s
    }
  }

  return { benchId, benches, bench, next, mine, person, loading, busy, afterAction, waitingForPin, knownVersion, loadBenches, chooseBench, refresh, act }
})
