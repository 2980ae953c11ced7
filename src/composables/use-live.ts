// Screens follow the live stores through these: "I show this store" and "reload me when these resource keys change" (the bridge decides from events).
import { getCurrentScope, onScopeDispose } from 'vue'
import { useLiveStore } from '@/stores/live'
import { createDebounce } from '@/lib/debounce'

/** Marks a live store as shown for the life of the calling component, so the bridge keeps it up to date. */
export function useLiveShown(name: 'board' | 'bench-floor' | 'metal') {
  const off = useLiveStore().show(name)
  if (getCurrentScope()) onScopeDispose(off)
}

/**
 * Calls `reload` (debounced) when the bridge invalidates one of the keys the screen shows ('jobBag:12', 'operation:40',
 * 'order:7:money', 'metal', …), and after a reconnect.
 */
export function useLiveKeys(keys: () => readonly string[], reload: () => void, wait = 200, maxWait = 1500) {
  const debounced = createDebounce(reload, wait, maxWait)
  const off = useLiveStore().watchKeys(keys, debounced)
  if (getCurrentScope())
    onScopeDispose(() => {
      off()
      debounced.cancel()
    })
}
