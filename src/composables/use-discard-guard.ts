// A form closed by Esc, a click beside it or its ✕ while it holds changes not saved asks first; Cancel and a save close it as they say.
import { computed, nextTick, ref, watch } from 'vue'

export interface DiscardGuardOptions {
  /** Whether the form is open: closing forgets its saved state. */
  open: () => boolean
  /** The form's values (compared as JSON with the values it was filled with). */
  form: () => unknown
  /** What the question calls the thing, e.g. "routing". */
  noun: string
}

export function useDiscardGuard(o: DiscardGuardOptions) {
  const baseline = ref<string | null>(null)
  const snap = () => JSON.stringify(o.form())

  /** Takes the form as it is once the current update is done (watchers that tidy it included) as its unchanged state. */
  function markClean() {
    void nextTick(() => {
      if (o.open()) baseline.value = snap()
    })
  }
  watch(
    () => o.open(),
    (open) => {
      if (!open) baseline.value = null
    },
  )

  /** True when the form differs from what it was filled with. */
  const dirty = computed(() => baseline.value !== null && snap() !== baseline.value)

  /** For the dialog's or drawer's `before-close`: closes at once when nothing changed, else only when the user says to. */
  async function beforeClose(done: () => void) {
    if (!dirty.value) return done()
    const lose = await ElMessageBox.confirm(`Your changes to this ${o.noun} are not saved. Close it and lose them?`, 'Changes not saved', {
      confirmButtonText: 'Close and lose them',
      cancelButtonText: 'Keep editing',
      type: 'warning',
    }).then(
      () => true,
      () => false,
    )
    if (lose) done()
  }

  return { dirty, markClean, beforeClose }
}
