// Keeps an open board live: reloads (debounced) on every change event, follows planner progress, catches up after a reconnect.
import { getCurrentScope, onScopeDispose, type ShallowRef } from 'vue'
import { acquireLiveChannel, releaseLiveChannel, type ConnectionState, type LiveChannel } from '@/realtime/socket'
import type { RunProgress } from '@/api/plans'

export interface Debounced {
  (): void
  /** Runs a pending call now. */
  flush(): void
  cancel(): void
}

/** Trailing-edge debounce that still fires at least every `maxWait` ms while calls keep coming. */
export function createDebounce(fn: () => void, wait: number, maxWait = wait * 8): Debounced {
  let timer: ReturnType<typeof setTimeout> | null = null
  let firstAt: number | null = null
  const run = () => {
    if (timer) clearTimeout(timer)
    timer = null
    firstAt = null
    fn()
  }
  const d = (() => {
    const now = Date.now()
    firstAt ??= now
    if (timer) clearTimeout(timer)
    const left = Math.max(0, Math.min(wait, firstAt + maxWait - now))
    timer = setTimeout(run, left)
  }) as Debounced
  d.flush = () => { if (timer) run() }
  d.cancel = () => {
    if (timer) clearTimeout(timer)
    timer = null
    firstAt = null
  }
  return d
}

/** Events that change what the board shows (files on orders do not). */
export const BOARD_EVENTS = new Set(['order:created', 'order:updated', 'operation:changed', 'jobBag:changed', 'plan:drafted', 'plan:published', 'plan:discarded', 'plan:changed', 'masterdata:changed'])

export interface LiveBoardHooks {
  /** Reload what the board shows (board window, versions, load). */
  reload: () => void | Promise<void>
  onProgress?: (p: RunProgress & { runId: string }) => void
  onDrafted?: (p: { id: number; runId?: string }) => void
  /** A planner run ended with an error (any manager's; the handler checks whether it is ours). */
  onFailed?: (p: { runId: string; error: string }) => void
  /** Any recorded change, before the debounced reload (e.g. to note who moved what). */
  onChange?: (event: string, payload: Record<string, unknown>) => void
  debounceMs?: number
  /** For tests: a channel instead of the app's shared one. */
  channel?: LiveChannel
}

/** Subscribes for the life of the calling component; returns the connection state for the badge. */
export function useLiveBoard(h: LiveBoardHooks): { state: ShallowRef<ConnectionState>; channel: LiveChannel; stop: () => void } {
  const channel = h.channel ?? acquireLiveChannel()
  const reload = createDebounce(() => void h.reload(), h.debounceMs ?? 150, 1000)
  const offs = [
    channel.onAnyChange((payload, event) => {
      if (!BOARD_EVENTS.has(event)) return
      h.onChange?.(event, payload)
      reload()
    }),
    channel.on('plan:progress', (p) => h.onProgress?.(p as unknown as RunProgress & { runId: string })),
    channel.on('plan:drafted', (p) => h.onDrafted?.(p as unknown as { id: number; runId?: string })),
    channel.on('plan:failed', (p) => h.onFailed?.(p as unknown as { runId: string; error: string })),
    // After a reconnect the missed events were replayed above; reload at once whatever they were.
    channel.onResync(() => {
      reload.cancel()
      void h.reload()
    }),
  ]
  let stopped = false
  const stop = () => {
    if (stopped) return
    stopped = true
    reload.cancel()
    offs.forEach((off) => off())
    if (!h.channel) releaseLiveChannel(channel)
  }
  if (getCurrentScope()) onScopeDispose(stop)
  return { state: channel.state, channel, stop }
}
