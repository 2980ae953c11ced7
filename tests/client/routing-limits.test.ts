// A routing's figures typed beyond the shared schema's limits (routingInput: base minutes at most 10000, a wait at most a week,
// a run's rate above 50 %) stay as typed and are refused under their fields, and nothing is saved — 12000 minutes used to become
// 10000 on leaving the field, a rate of 40 % became 50.1 %, and both were saved without a word; an emptied rate stopped the save
// with no field marked.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Routing } from '@shared/schemas/routing'
import { errorUnder, press, typeInto } from '../setup/form-fields'

const ROUTING: Routing = {
  id: 4,
  code: 'stacking-ring',
  name: 'Stacking ring',
  description: '',
  kind: 'run',
  learningRate: 0.85,
  resizesRing: false,
  steps: [
    {
      id: 11,
      key: 'saw',
      kindId: 2,
      name: 'Saw and file',
      baseMinutes: 30,
      perStoneMinutes: 0,
      perMmMinutes: 0,
      sizeBandFactors: {},
      roleFactors: {},
      requiredLevel: 1,
      waitAfterMinutes: 0,
      leadDays: 0,
      after: [],
    },
  ],
  version: 5,
  warnings: [],
}
const api = vi.hoisted(() => ({ updateRouting: vi.fn() }))
vi.mock('@/api/routings', () => ({ listRoutings: vi.fn(async () => []), createRouting: vi.fn(), updateRouting: api.updateRouting }))
vi.mock('@/api/operation-kinds', () => ({
  listKinds: vi.fn(async () => [{ id: 2, workshopId: 1, code: 'saw', name: 'Sawing', outside: false, hazards: [], color: '#777777', version: 0 }]),
}))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: RoutingEditor } = await import('@/components/routings/RoutingEditor.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
  document.body.innerHTML = ''
  api.updateRouting.mockReset()
})

async function open() {
  w = mount(RoutingEditor, { props: { open: true, routing: ROUTING }, attachTo: document.body, global: { plugins: [ElementPlus, createPinia()] } })
  await flushPromises()
}

describe('the figures of a routing', { timeout: 30_000 }, () => {
  it('when a step of 12000 minutes with a wait of 20000 is typed and saved, then both stay as typed, each says why, and nothing is sent', async () => {
    await open()
    expect((await typeInto('step-base', '12000')).value).toBe('12000')
    expect((await typeInto('step-wait', '20000')).value).toBe('20000')
    await press('routing-save')
    expect(errorUnder('step-base')).toBe('Must be at most 10000')
    expect(errorUnder('step-wait')).toBe('Must be at most a week')
    expect(api.updateRouting).not.toHaveBeenCalled()
  })

  it('when a run’s rate of 40 % is typed and saved, then 40 stays, the field says it must be above 50 %, and nothing is sent', async () => {
    await open()
    expect((await typeInto('routing-learning-rate', '40')).value).toBe('40.0')
    await press('routing-save')
    expect(errorUnder('routing-learning-rate')).toBe('Must be above 0.5 (50 %)')
    expect(api.updateRouting).not.toHaveBeenCalled()
  })

  it('when the run’s rate is emptied and saved, then the field says it is required and nothing is sent', async () => {
    await open()
    await typeInto('routing-learning-rate', '')
    await press('routing-save')
    expect(errorUnder('routing-learning-rate')).toBe('Is required')
    expect(api.updateRouting).not.toHaveBeenCalled()
  })
})
