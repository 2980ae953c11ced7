// A negative price in the order form: one plain reason under the field, in the words of the form, never the schema's jargon.
import { describe, expect, it, vi } from 'vitest'
import { defineComponent, h, reactive } from 'vue'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus, { ElForm, ElFormItem } from 'element-plus'
import { orderUpdate } from '@shared/schemas/order'
import { quoteUpdate } from '@shared/schemas/quote'
import type { ZodType } from 'zod'
import MoneyMinorField from '@/components/money/MoneyMinorField.vue'
import { useApiError } from '@/composables/use-api-error'

vi.stubGlobal('ElMessage', vi.fn())

/** The order drawer's price as the drawer lays it out: the amount field inside a form item showing the form's reason. */
function priceForm(schema: ZodType, key: string, extra: Record<string, unknown>) {
  let save = () => {}
  const Form = defineComponent({
    setup() {
      const terms = reactive<Record<string, unknown>>({ [key]: 1000 })
      const { fields, check } = useApiError({ model: () => terms })
      save = () => void check(schema, { ...extra, ...terms })
      return () =>
        h(ElForm, null, () =>
          h(ElFormItem, { label: 'Price quoted', error: fields[key] }, () =>
            h(MoneyMinorField, { modelValue: terms[key] as number, 'onUpdate:modelValue': (v: number | null) => (terms[key] = v), currency: 'GBP' }),
          ),
        )
    },
  })
  const w = mount(Form, { attachTo: document.body, global: { plugins: [ElementPlus] } })
  return { w, save: () => save() }
}

/** The form item shows its reason after a short debounce (Element Plus: 100 ms). */
const shown = async () => {
  await flushPromises()
  await new Promise((r) => setTimeout(r, 150))
  await flushPromises()
}

/** Every reason shown under the price: the field's own and the form item's. */
const reasons = (w: ReturnType<typeof mount>) => [...w.findAll('.mmf__problem'), ...w.findAll('.el-form-item__error')].map((e) => e.text())

describe('a negative price', () => {
  it('when −50 is typed as the order’s price and saved, then one reason shows: "Must be 0 or more"', async () => {
    const { w, save } = priceForm(orderUpdate, 'priceQuotedMinor', { version: 1 })
    await w.find('input').setValue('-50')
    await flushPromises() // the typed text reaches the form before it is saved
    save()
    await shown()
    expect(reasons(w)).toEqual(['Must be 0 or more'])
    expect(w.text()).not.toMatch(/minor units|must not be negative/i)
    w.unmount()
  })

  it('when −50 is typed as a quote’s price and saved, then the same one reason shows', async () => {
    const { w, save } = priceForm(quoteUpdate, 'priceMinor', { version: 1 })
    await w.find('input').setValue('-50')
    await flushPromises() // the typed text reaches the form before it is saved
    save()
    await shown()
    expect(reasons(w)).toEqual(['Must be 0 or more'])
    w.unmount()
  })

  it('when a quote’s price of 0 is saved, then the form’s own reason shows under the field (the check still names the field)', async () => {
    const { w, save } = priceForm(quoteUpdate, 'priceMinor', { version: 1 })
    await w.find('input').setValue('0')
    await flushPromises() // the typed text reaches the form before it is saved
    save()
    await shown()
    expect(reasons(w)).toEqual(['Must be more than zero'])
    w.unmount()
  })

  it('when the schema itself refuses a negative amount (an API caller), then it says "must be 0 or more" too', () => {
    const r = orderUpdate.safeParse({ priceQuotedMinor: -5000, version: 1 })
    expect(r.success).toBe(false)
    expect(r.error!.issues.map((i) => i.message)).toEqual(['must be 0 or more'])
  })
})
