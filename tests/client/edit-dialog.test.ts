// An add-or-change dialog: the form filled from the row, saved with its version, field reasons from the server under the fields, and an edit someone else overtook said plainly.
import { describe, expect, it } from 'vitest'
import { effectScope, nextTick, reactive, ref } from 'vue'
import { z } from 'zod'
import { ApiError } from '@/api/client'
import { useEditDialog } from '@/composables/use-edit-dialog'

/** The toasts on screen (Element Plus puts them in the page body). */
const toasts = () =>
  [...document.querySelectorAll('.el-message')].map((e) => ({
    type: [...e.classList].find((c) => c.startsWith('el-message--'))?.slice('el-message--'.length),
    message: e.textContent?.trim() ?? '',
  }))

interface Row {
  id: number
  version: number
  name: string
}
const input = z.object({ name: z.string().trim().min(1, 'is required') })
const update = input.extend({ version: z.number().int() })

function dialog(answer: (body: unknown) => Promise<Row>) {
  const open = ref(false)
  const row = ref<Row | null>(null)
  const form = reactive({ name: '' })
  const sent: unknown[] = []
  const saved: Row[] = []
  let staleCalls = 0
  const d = effectScope().run(() =>
    useEditDialog({
      open: () => open.value,
      row: () => row.value,
      form: () => form,
      fill: (r) => Object.assign(form, { name: r?.name ?? '' }),
      create: {
        schema: input,
        save: (b) => {
          sent.push(b)
          return answer(b)
        },
      },
      update: {
        schema: update,
        save: (_id, b) => {
          sent.push(b)
          return answer(b)
        },
      },
      messages: { added: 'Thing added', saved: 'Thing saved' },
      noun: 'thing',
      stale: () => {
        staleCalls++
      },
      saved: (r) => void saved.push(r),
    }),
  )!
  return { d, open, row, form, sent, saved, staleCalls: () => staleCalls }
}

describe('useEditDialog', () => {
  it('when a row is opened, changed and saved, then its version goes with the change and the saved row is handed on', async () => {
    const t = dialog(async (b) => ({ ...(b as { name: string }), id: 7, version: 4 }))
    t.row.value = { id: 7, version: 3, name: 'Old' }
    t.open.value = true
    await nextTick()
    expect(t.form.name).toBe('Old')
    t.form.name = 'New'
    await t.d.save()
    expect(t.sent).toEqual([{ name: 'New', version: 3 }])
    expect(t.saved).toEqual([{ id: 7, version: 4, name: 'New' }])
    expect(toasts().at(-1)).toEqual({ type: 'success', message: 'Thing saved' })
  })

  it('when the form fails the shared schema, then nothing is sent and the field says why', async () => {
    const t = dialog(async () => ({ id: 1, version: 1, name: 'x' }))
    t.open.value = true
    await nextTick()
    await t.d.save()
    expect(t.sent).toEqual([])
    expect(t.d.fields.name).toBe('Is required')
  })

  it('when the server refuses a field (400), then its reason goes under that field and nothing is handed on', async () => {
    const t = dialog(async () => {
      throw new ApiError({ status: 400, code: 'validation', message: 'Check the form', fields: { name: 'is already taken' } })
    })
    t.open.value = true
    await nextTick()
    t.form.name = 'Twin'
    await t.d.save()
    expect(t.d.fields.name).toBe('Is already taken')
    expect(t.saved).toEqual([])
    expect(t.d.stale.value).toBe(false)
    expect(t.d.busy.value).toBe(false)
  })

  it('when the server says a value clashes with another row (409 naming the field), then the reason goes under that field and it is not taken for a stale edit', async () => {
    const t = dialog(async () => {
      throw new ApiError({ status: 409, code: 'conflict', message: 'That name is taken', fields: { name: 'is already used by another thing' } })
    })
    t.open.value = true
    await nextTick()
    t.form.name = 'Twin'
    await t.d.save()
    expect(t.d.fields.name).toBe('Is already used by another thing')
    expect(t.d.stale.value).toBe(false)
    expect(t.staleCalls()).toBe(0)
  })

  it('when someone else saved the row first (409), then the dialog says so, asks for a reload and hands nothing on', async () => {
    const t = dialog(async () => {
      throw new ApiError({ status: 409, code: 'conflict', message: 'Changed by someone else' })
    })
    t.row.value = { id: 7, version: 3, name: 'Old' }
    t.open.value = true
    await nextTick()
    t.form.name = 'Mine'
    await t.d.save()
    expect(t.d.stale.value).toBe(true)
    expect(t.staleCalls()).toBe(1)
    expect(t.saved).toEqual([])
    expect(toasts().at(-1)?.type).toBe('warning')
    expect(toasts().at(-1)?.message).toContain('Someone else changed this thing')
  })
})
