// The amount field: decimal text in the workshop's currency read into integer minor units exactly, refused with the reason when it cannot be.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import MoneyMinorField from '@/components/money/MoneyMinorField.vue'

const field = (props: Record<string, unknown>) =>
  mount(MoneyMinorField, { props: { modelValue: null, currency: 'GBP', ...props }, global: { plugins: [ElementPlus] } })
const last = (w: ReturnType<typeof field>) => (w.emitted('update:modelValue') ?? []).at(-1)?.[0]

describe('MoneyMinorField', () => {
  it('when 19.99 is typed in pounds, then 1999 pence is handed on (19.99 × 100 in floating point is 1998.9999999999998)', async () => {
    const w = field({})
    await w.find('input').setValue('19.99')
    expect(last(w)).toBe(1999)
    expect(w.find('.mmf__problem').exists()).toBe(false)
  })

  it('when the workshop prices in yen or dinars, then the digits follow the currency (ISO 4217: JPY 0, BHD 3 decimals)', async () => {
    const yen = field({ currency: 'JPY' })
    await yen.find('input').setValue('1500')
    expect(last(yen)).toBe(1500)
    const dinar = field({ currency: 'BHD' })
    await dinar.find('input').setValue('1.234')
    expect(last(dinar)).toBe(1234)
  })

  it('when more decimals than the currency has are typed, then the field says so and hands on no amount', async () => {
    const w = field({})
    await w.find('input').setValue('12.345')
    expect(Number.isNaN(last(w))).toBe(true)
    expect(w.find('.mmf__problem').text()).toBe('Has at most 2 decimals in GBP')
  })

  it('when a stored amount is shown, then it is written with the currency decimals', () => {
    expect((field({ modelValue: 123_450 }).find('input').element as HTMLInputElement).value).toBe('1234.50')
    expect((field({ modelValue: 1500, currency: 'JPY' }).find('input').element as HTMLInputElement).value).toBe('1500')
    expect((field({ modelValue: null }).find('input').element as HTMLInputElement).value).toBe('')
  })
})
