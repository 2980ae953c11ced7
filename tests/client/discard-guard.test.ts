// Closing a form that holds changes not saved (Esc, a click beside it, its ✕) asks first; an unchanged form closes at once.
// Hand-worked cases: the form as it was filled is "unchanged", whatever the user typed and then put back included.
import { afterEach, describe, expect, it } from 'vitest'
import { effectScope, nextTick, reactive, ref } from 'vue'
import { z } from 'zod'
import { useEditDialog } from '@/composables/use-edit-dialog'

interface Row {
  id: number
  version: number
  name: string
  tags: string[]
}
const input = z.object({ name: z.string().trim().min(1, 'is required'), tags: z.array(z.string()) })
const update = input.extend({ version: z.number().int() })

function dialog() {
  const open = ref(false)
  const row = ref<Row | null>(null)
  const form = reactive({ name: '', tags: [] as string[] })
  const d = effectScope().run(() =>
    useEditDialog({
      open: () => open.value,
      row: () => row.value,
      form: () => form,
      fill: (r) => Object.assign(form, { name: r?.name ?? '', tags: [...(r?.tags ?? [])] }),
      create: { schema: input, save: async (b) => ({ ...b, id: 9, version: 1 }) },
      update: { schema: update, save: async (id, b) => ({ ...b, id, version: b.version + 1 }) },
      messages: { added: 'Thing added', saved: 'Thing saved' },
      noun: 'thing',
      saved: () => undefined,
    }),
  )!
  return { d, open, row, form }
}

/** Flushes Vue's updates and Element Plus's message box transitions. */
const settle = async () => {
  for (let i = 0; i < 5; i++) {
    await nextTick()
    await new Promise((r) => setTimeout(r, 20))
  }
}
const box = () => document.querySelector('.el-message-box')
const boxButton = (text: string) => [...document.querySelectorAll<HTMLButtonElement>('.el-message-box button')].find((b) => b.textContent?.trim() === text)

afterEach(async () => {
  // Leave no question open for the next case.
  boxButton('Keep editing')?.click()
  await settle()
  document.body.innerHTML = ''
})

async function opened(row: Row | null) {
  const t = dialog()
  t.row.value = row
  t.open.value = true
  await settle()
  return t
}

describe('closing a form with changes not saved', () => {
  it('when nothing was changed, then it closes at once without a question', async () => {
    const t = await opened({ id: 3, version: 1, name: 'Bench 2', tags: ['soldering'] })
    let closed = 0
    await t.d.beforeClose(() => closed++)
    expect(closed).toBe(1)
    expect(box()).toBeNull()
  })

  it('when a field was changed, then it asks; "Keep editing" leaves it open with the change, "Close and lose them" closes it', async () => {
    const t = await opened({ id: 3, version: 1, name: 'Bench 2', tags: ['soldering'] })
    t.form.name = 'Bench 2 (window)'
    await nextTick()
    expect(t.d.dirty.value).toBe(true)
    let closed = 0
    const first = t.d.beforeClose(() => closed++)
    await settle()
    expect(box()?.textContent).toContain('Your changes to this thing are not saved. Close it and lose them?')
    boxButton('Keep editing')!.click()
    await first
    expect(closed).toBe(0)
    expect(t.form.name).toBe('Bench 2 (window)')
    await settle()
    const second = t.d.beforeClose(() => closed++)
    await settle()
    boxButton('Close and lose them')!.click()
    await second
    expect(closed).toBe(1)
  })

  it('when a change inside a list is put back as it was, then the form counts as unchanged', async () => {
    const t = await opened({ id: 3, version: 1, name: 'Bench 2', tags: ['soldering'] })
    t.form.tags.push('setting')
    await nextTick()
    expect(t.d.dirty.value).toBe(true)
    t.form.tags.pop()
    await nextTick()
    expect(t.d.dirty.value).toBe(false)
  })

  it('when a new one has something typed in, then it asks; closed and opened again it starts unchanged', async () => {
    const t = await opened(null)
    expect(t.d.dirty.value).toBe(false)
    t.form.name = 'Bench 9'
    await nextTick()
    expect(t.d.dirty.value).toBe(true)
    t.open.value = false
    await settle()
    t.open.value = true
    await settle()
    expect(t.form.name).toBe('')
    expect(t.d.dirty.value).toBe(false)
  })

  it('when a switch beside the form changes what would be sent, then that counts as a change too', async () => {
    // As "works its own hours" beside a person's week: not a field of the form, but it decides what is saved.
    const open = ref(false)
    const own = ref(false)
    const form = reactive({ name: 'Ada' })
    const d = effectScope().run(() =>
      useEditDialog({
        open: () => open.value,
        row: () => ({ id: 1, version: 1, name: 'Ada' }),
        form: () => form,
        fill: () => {
          own.value = false
        },
        values: () => ({ name: form.name, ownHours: own.value }),
        create: { schema: z.object({ name: z.string() }), save: async () => ({ id: 1, version: 2, name: 'Ada' }) },
        update: { schema: z.object({ name: z.string(), version: z.number() }), save: async () => ({ id: 1, version: 2, name: 'Ada' }) },
        messages: { added: 'Added', saved: 'Saved' },
        noun: 'person',
        saved: () => undefined,
      }),
    )!
    open.value = true
    await settle()
    expect(d.dirty.value).toBe(false)
    own.value = true
    await nextTick()
    expect(d.dirty.value).toBe(true)
  })

  it('when the change was saved and the form stays open, then closing no longer asks', async () => {
    const t = await opened({ id: 3, version: 1, name: 'Bench 2', tags: [] })
    t.form.name = 'Bench 3'
    await nextTick()
    await t.d.save()
    await settle()
    expect(t.d.dirty.value).toBe(false)
  })
})
