// Adding a closure or leave: the days are picked on the calendar, so a form sent without them says so in the picker's words.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import CalendarClosures from '@/components/calendar/CalendarClosures.vue'

/** The form item shows its reason after a short debounce (Element Plus: 100 ms). */
const shown = async () => {
  await flushPromises()
  await new Promise((r) => setTimeout(r, 150))
  await flushPromises()
}

describe('adding a closure', () => {
  it('when "Add closure" is pressed with no days picked, then the form says "Pick the first and last day", not a YYYY-MM-DD format', async () => {
    const w = mount(CalendarClosures, {
      props: { closures: [], weekPattern: [], editable: true },
      attachTo: document.body,
      global: { plugins: [ElementPlus, createPinia()] },
    })
    await w.find('input[placeholder="e.g. Winter break"]').setValue('Winter break')
    await w.find('form').trigger('submit')
    await shown()
    const reasons = w.findAll('.el-form-item__error').map((e) => e.text())
    expect(reasons).toEqual(['Pick the first and last day'])
    expect(w.text()).not.toMatch(/YYYY-MM-DD/)
    expect(w.emitted('add')).toBeUndefined()
    w.unmount()
  })

  it('when neither the days nor the name are given, then each field says what it needs', async () => {
    const w = mount(CalendarClosures, {
      props: { closures: [], weekPattern: [], editable: true },
      attachTo: document.body,
      global: { plugins: [ElementPlus, createPinia()] },
    })
    await w.find('form').trigger('submit')
    await shown()
    expect(w.findAll('.el-form-item__error').map((e) => e.text())).toEqual(['Pick the first and last day', 'Is required'])
    w.unmount()
  })
})
