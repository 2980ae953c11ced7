// One add-or-change dialog: the form filled from the row when it opens, checked with the shared schema, saved with the row's version; field reasons (400, or a 409 naming a field) go under the fields, an edit someone else overtook (409) is said plainly.
import { ref, watch } from 'vue'
import type { ZodType, z } from 'zod'
import { ApiError } from '@/api/client'
import { useApiError } from './use-api-error'
import { useDiscardGuard } from './use-discard-guard'

export interface EditDialogOptions<Row extends { id: number; version: number }, Saved, C extends ZodType, U extends ZodType> {
  /** Whether the dialog is open, and the row it edits (null: a new one). */
  open: () => boolean
  row: () => Row | null
  /** The form (a reactive object): an edited field loses its old reason. */
  form: () => unknown
  /** Copies the row (or blanks) into the form; `opening` is true when the dialog has just been opened. */
  fill: (row: Row | null, opening: boolean) => void
  /** What is sent, without the version; the form itself unless given. */
  values?: (row: Row | null) => object
  create: { schema: C; save: (body: z.output<C>) => Promise<Saved> }
  update: { schema: U; save: (id: number, body: z.output<U>) => Promise<Saved> }
  /** The toast after saving a new row / a change. */
  messages: { added: string; saved: string }
  /** Called with the saved row; the dialog's owner closes it. */
  saved: (saved: Saved) => void
  /** What the dialog calls the thing in the stale-edit message, e.g. "bench". */
  noun: string
  /** Called on a stale edit (e.g. the store reloads its list so the next opening shows the other person's change). */
  stale?: () => unknown
  /** Called when the form's own check found reasons (e.g. to show the tab they are on). */
  invalid?: () => void
}

export function useEditDialog<Row extends { id: number; version: number }, Saved, C extends ZodType, U extends ZodType>(
  o: EditDialogOptions<Row, Saved, C, U>,
) {
  const errors = useApiError({ model: o.form })
  /** True after the server said someone else changed the row since it was opened. */
  const stale = ref(false)
  /** Closing with changes not saved asks first (`beforeClose` goes on the dialog). */
  // What would be sent (the values, when given) is what counts as a change: a switch outside the form that changes it counts too.
  const guard = useDiscardGuard({ open: o.open, form: () => (o.values ? o.values(o.row()) : o.form()), noun: o.noun })

  watch(
    () => [o.open(), o.row()?.id] as const,
    ([open], old) => {
      errors.clear()
      stale.value = false
      o.fill(o.row(), open && !old?.[0])
      guard.markClean()
    },
    { immediate: true },
  )

  async function save(): Promise<Saved | undefined> {
    const row = o.row()
    const values = o.values ? o.values(row) : { ...(o.form() as object) }
    const body = row ? errors.check(o.update.schema, { ...values, version: row.version }) : errors.check(o.create.schema, values)
    if (!body) {
      o.invalid?.()
      return undefined
    }
    errors.busy.value = true
    try {
      const saved = row ? await o.update.save(row.id, body as z.output<U>) : await o.create.save(body as z.output<C>)
      ElMessage.success(row ? o.messages.saved : o.messages.added)
      guard.markClean()
      o.saved(saved)
      return saved
    } catch (err) {
      // A 409 naming fields is a clash with another row (a name taken): its reasons go under the fields like a 400.
      if (err instanceof ApiError && err.status === 409 && Object.keys(err.fields).every((k) => k === 'version')) {
        stale.value = true
        ElMessage({
          type: 'warning',
          message: `Someone else changed this ${o.noun} while you were editing it, so your changes were not saved. Close it and open it again to see theirs.`,
          showClose: true,
          duration: 0,
        })
        void Promise.resolve(o.stale?.()).catch(() => undefined)
      } else errors.show(err)
      return undefined
    } finally {
      errors.busy.value = false
    }
  }

  return { ...errors, stale, save, dirty: guard.dirty, beforeClose: guard.beforeClose }
}
