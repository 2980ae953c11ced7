// Loading and error state for a store's fetches (one in flight at a time per store).
import { ref } from 'vue'
import { messageOf } from './use-api-error'

export function useLoading() {
  /** True while a fetch runs. */
  const loading = ref(false)
  /** The last fetch's error message, or null. */
  const error = ref<string | null>(null)
  let inFlight: Promise<unknown> | null = null

  async function track<T>(fn: () => Promise<T>): Promise<T> {
    if (inFlight) return inFlight as Promise<T>
    loading.value = true
    error.value = null
    const p = fn()
    inFlight = p
    try {
      return await p
    } catch (err) {
      error.value = messageOf(err)
      throw err
    } finally {
      loading.value = false
      inFlight = null
    }
  }
  return { loading, error, track }
}
