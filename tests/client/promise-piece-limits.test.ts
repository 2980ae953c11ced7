// The promise check's piece: a figure typed beyond its limits stays as typed and is refused under its field, nothing is asked;
// a figure within them is asked as typed when "Check the date" is pressed — a size of 12.3 mm, not a step of 0.5 mm, once failed
// the browser's own check of the field and the form was never sent, without a word. The limits are the shared schema's
// (pieceParams: 1 to 500 pieces, 0 to 300 mm).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Routing } from '@shared/schemas/routing'
import { errorUnder, press as pressButton, typeInto } from '../setup/form-fields'

const ROUTING: Routing = {
  id: 1,
  code: 'signet-ring',
  name: 'Signet ring',
  description: '',
  kind: 'piece',
  learningRate: null,
  resizesRing: false,
  steps: [],
  version: 1,
  warnings: [],
}
const api = vi.hoisted(() => ({ checkPromise: vi.fn() }))
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => [ROUTING]) }))
vi.mock('@/api/promise', () => ({ checkPromise: api.checkPromise, acceptPromise: vi.fn(), orderForecast: vi.fn() }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: PromiseView } = await import('@/views/PromiseView.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.checkPromise.mockReset()
})

const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
async function open() {
  w = mount(PromiseView, { attachTo: document.body, global: { plugins: [ElementPlus, createPinia()], stubs: { RouterLink: true } } })
  await flushPromises()
  // The routing, picked as a person does: open the list and click its name.
  q('[data-test=promise-routing] .el-select__wrapper, [data-test=promise-routing]')!.click()
  await flushPromises()
  const item = [...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')].find((e) => e.textContent?.trim() === 'Signet ring')
  expect(item, 'the routing in the list').toBeTruthy()
  item!.click()
  await flushPromises()
}

describe('the figures of a piece in the promise check', { timeout: 30_000 }, () => {
  it('when a size of 12.3 mm and a stone size of 1.3 mm are typed and the date is checked, then they are asked as typed', async () => {
    api.checkPromise.mockImplementation(() => new Promise(() => undefined))
    await open()
    expect((await typeInto('promise-size', '12.3')).value).toBe('12.3')
    await typeInto('promise-stone-size', '1.3')
    await typeInto('promise-stones', '7')
    await pressButton('promise-check')
    expect(api.checkPromise).toHaveBeenCalledTimes(1)
    expect(api.checkPromise.mock.calls[0]![0]).toMatchObject({ routingId: 1, params: { sizeMm: 12.3, stoneSizeMm: 1.3, stoneCount: 7 } })
  })

  it('when 600 pieces of 400 mm are typed, then both stay as typed, each is refused under its field, and nothing is asked', async () => {
    await open()
    expect((await typeInto('promise-quantity', '600')).value).toBe('600')
    expect((await typeInto('promise-size', '400')).value).toBe('400.0')
    await pressButton('promise-check')
    expect(errorUnder('promise-quantity')).toBe('Must be at most 500')
    expect(errorUnder('promise-size')).toBe('Must be at most 300 mm')
    expect(api.checkPromise).not.toHaveBeenCalled()
  })

  it('when 2.5 pieces are typed or the stones are emptied, then each field says why and nothing is asked', async () => {
    await open()
    expect((await typeInto('promise-quantity', '2.5')).value).toBe('2.5')
    await typeInto('promise-stones', '')
    await pressButton('promise-check')
    expect(errorUnder('promise-quantity')).toBe('Must be a whole number')
    expect(errorUnder('promise-stones')).toBe('Is required')
    expect(api.checkPromise).not.toHaveBeenCalled()
  })
})
