// Live state shared by the app: the socket's connection state, which live screens are shown, and invalidations of resources by key.
import { defineStore } from 'pinia'
import { computed, reactive, ref } from 'vue'
import type { ConnectionState } from '@/realtime/socket'

/** A screen's interest in invalidations: the keys it shows now (read at each invalidation) and what to do. */
interface Watcher {
  keys: () => readonly string[]
  fn: () => void
}

export const useLiveStore = defineStore('live', () => {
  /** Set by the bridge (src/realtime/bridge.ts) from the one socket; 'offline' while signed out. */
  const connection = ref<ConnectionState>('offline')
  const connected = computed(() => connection.value === 'connected')
  /** How many mounted screens show each live store ('board', 'bench-floor', 'metal'): the bridge reloads only what is shown. */
  const shown = reactive<Record<string, number>>({})
  const watchers = new Set<Watcher>()

  function show(name: string): () => void {
    shown[name] = (shown[name] ?? 0) + 1
    let done = false
    return () => {
      if (done) return
      done = true
      shown[name] = Math.max(0, (shown[name] ?? 1) - 1)
    }
  }
  const isShown = (name: string) => (shown[name] ?? 0) > 0

  /** Screens with data of their own (a job bag, a money panel) say which resource keys they show, e.g. 'jobBag:12'. */
  function watchKeys(keys: () => readonly string[], fn: () => void): () => void {
    const w: Watcher = { keys, fn }
    watchers.add(w)
    return () => watchers.delete(w)
  }

  /** Tells each screen showing one of these keys to reload (once, however many of its keys changed). */
  function invalidate(keys: readonly string[]) {
    if (!keys.length) return
    const set = new Set(keys)
    for (const w of [...watchers]) if (w.keys().some((k) => set.has(k))) w.fn()
  }

  /** After a reconnect: everything shown may be stale. */
  function invalidateAll() {
    for (const w of [...watchers]) w.fn()
  }

  return { connection, connected, shown, show, isShown, watchKeys, invalidate, invalidateAll }
})
