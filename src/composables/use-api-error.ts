// Shows API and validation errors: a toast for the whole, reasons next to the form fields they belong to.
import { reactive, ref, watch } from 'vue'
import type { ZodType, z } from 'zod'
import { ApiError } from '@/api/client'

/** "is required" → "Is required": field reasons read as short sentences under the field. */
export const sentence = (s: string) => (s ? s.charAt(0).toUpperCase() + s.slice(1) : s)

/** Field path → reason, from zod issues (same keys the server uses: `steps.0.key`). */
export function zodFieldErrors(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {}
  for (const issue of error.issues) {
    const key = issue.path.length ? issue.path.map(String).join('.') : '_'
    if (!out[key]) out[key] = issue.message
  }
  return out
}

export function messageOf(err: unknown): string {
  if (err instanceof ApiError) return err.message
  if (err instanceof Error) return err.message
  return 'Something went wrong.'
}

/** The value at a zod issue's path inside the checked input (undefined when the path leads nowhere). */
function valueAt(value: unknown, path: readonly PropertyKey[]): unknown {
  let v = value
  for (const k of path) {
    if (v === null || typeof v !== 'object') return undefined
    v = (v as Record<PropertyKey, unknown>)[k]
  }
  return v
}

/** Leaf values by path ("pieces.0.params.metal" → "gold-9ct"), to see which fields an edit touched. */
export function flatten(value: unknown, prefix = '', out: Record<string, unknown> = {}): Record<string, unknown> {
  if (value !== null && typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>)
    if (!entries.length) out[prefix] = Array.isArray(value) ? '[]' : '{}'
    for (const [k, v] of entries) flatten(v, prefix ? `${prefix}.${k}` : k, out)
  } else out[prefix] = value
  return out
}

/**
 * Field errors for one form. With `model`, a reason disappears as soon as the user edits that field
 * (or anything below it), so old reasons do not linger until the next save.
 */
export function useApiError(o: { model?: () => unknown } = {}) {
  /** Reasons by field path; bind with `<el-form-item :error="fields.name">`. */
  const fields = reactive<Record<string, string>>({})
  const busy = ref(false)

  if (o.model) {
    const model = o.model
    let before = flatten(model())
    watch(
      model,
      () => {
        const after = flatten(model())
        const changed = Object.keys({ ...before, ...after }).filter((p) => before[p] !== after[p])
        for (const key of Object.keys(fields)) if (changed.some((p) => p === key || p.startsWith(`${key}.`) || key.startsWith(`${p}.`))) delete fields[key]
        before = after
      },
      { deep: true },
    )
  }

  function clear() {
    for (const k of Object.keys(fields)) delete fields[k]
  }
  function setFields(f: Record<string, string>) {
    clear()
    for (const [k, v] of Object.entries(f)) fields[k] = sentence(v)
  }

  /** Shows any error; an ApiError's field reasons go next to the fields. */
  function show(err: unknown) {
    if (err instanceof ApiError && Object.keys(err.fields).length) setFields(err.fields)
    ElMessage({ type: 'error', message: messageOf(err), grouping: true, showClose: true, duration: 6000 })
  }

  /**
   * Client-side check with the shared schema before sending: the parsed value, or null with reasons shown. A field that hands
   * on NaN could not read its text and already says why under itself (MoneyMinorField: "Must be 0 or more"), so the schema's
   * reason for it is not shown a second time.
   */
  function check<S extends ZodType>(schema: S, value: unknown): z.output<S> | null {
    const r = schema.safeParse(value)
    if (r.success) {
      clear()
      return r.data as z.output<S>
    }
    const reasons = zodFieldErrors(r.error)
    for (const issue of r.error.issues) if (Number.isNaN(valueAt(value, issue.path))) delete reasons[issue.path.map(String).join('.')]
    setFields(reasons)
    ElMessage({ type: 'warning', message: 'Please correct the marked fields.', grouping: true })
    return null
  }

  /** Runs a call with `busy` set; errors are shown and undefined returned. */
  async function run<T>(fn: () => Promise<T>): Promise<T | undefined> {
    busy.value = true
    try {
      return await fn()
    } catch (err) {
      show(err)
      return undefined
    } finally {
      busy.value = false
    }
  }

  /** Reasons for a list row, e.g. rowFields('steps', 2) → { key: '…' } from `steps.2.key`. */
  function rowFields(prefix: string, index: number): Record<string, string> {
    const p = `${prefix}.${index}.`
    const out: Record<string, string> = {}
    for (const [k, v] of Object.entries(fields)) if (k.startsWith(p)) out[k.slice(p.length)] = v
    return out
  }

  /** Reasons below a path, keys relative to it, e.g. under('weekPattern') → { '3.end': '…', '': '…' }. */
  function under(prefix: string): Record<string, string> {
    const out: Record<string, string> = {}
    for (const [k, v] of Object.entries(fields)) {
      if (k === prefix) out[''] = v
      else if (k.startsWith(`${prefix}.`)) out[k.slice(prefix.length + 1)] = v
    }
    return out
  }

  return { fields, busy, clear, setFields, show, check, run, rowFields, under }
}
