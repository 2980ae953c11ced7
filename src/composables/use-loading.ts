// Loading and error state for a store's fetches: the same request while it runs is shared, and only the latest request's
// answer is applied (a search whose query changed mid-fetch never shows the old query's page).
import { ref } from 'vue'
import { messageOf } from './use-api-error'

export interface Track {
  /**
   * Runs `fn`, unless a request with the same `key` is already running (then its answer is shared). `apply` receives the
   * answer only if no other request started since — an older answer arriving late is returned to its caller but not applied.
   */
  <T>(fn: () => Promise<T>, o?: { key?: string; apply?: (value: T) => void }): Promise<T>
}

export function useLoading() {
  /** True while the latest fetch runs. */
  const loading = ref(false)
  /** The latest fetch's error message, or null. */
  const error = ref<string | null>(null)
  let inFlight: { key: string; promise: Promise<unknown> } | null = null
  let latest = 0

  const track: Track = async <T>(fn: () => Promise<T>, o: { key?: string; apply?: (value: T) => void } = {}): Promise<T> => {
    const key = o.key ?? ''
    if (inFlight && inFlight.key === key) return inFlight.promise as Promise<T>
    const mine = ++latest
    loading.value = true
    error.value = null
    const promise = fn()
    inFlight = { key, promise }
    try {
      const value = await promise
      if (mine === latest) o.apply?.(value)
      return value
    } catch (err) {
      if (mine === latest) error.value = messageOf(err)
      throw err
    } finally {
      if (mine === latest) {
        loading.value = false
        inFlight = null
      }
    }
  }
  return { loading, error, track }
}
