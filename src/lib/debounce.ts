// Trailing-edge debounce with a longest wait: bursts of live events become one reload.
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
  d.flush = () => {
    if (timer) run()
  }
  d.cancel = () => {
    if (timer) clearTimeout(timer)
    timer = null
    firstAt = null
  }
  return d
}
