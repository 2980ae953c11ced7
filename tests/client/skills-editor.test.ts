// The skills editor: adding, changing and removing skills emits the whole new list; a speed typed beyond the shared schema's
// 0.3 to 3 stays as typed and the person's form refuses it under the row (it used to become 3 and be saved without a word).
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { OperationKind } from '@shared/schemas/operation-kind'
import type { Person, SkillInput } from '@shared/schemas/person'
import PeopleSkillsEditor from '@/components/people/PeopleSkillsEditor.vue'

const api = vi.hoisted(() => ({ updatePerson: vi.fn() }))
vi.mock('@/api/people', () => ({
  listPeople: vi.fn(async () => []),
  createPerson: vi.fn(),
  updatePerson: api.updatePerson,
  addLeave: vi.fn(),
  removeLeave: vi.fn(),
}))
vi.mock('@/api/users', () => ({ listUsers: vi.fn(async () => []) }))
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => Promise.reject(new Error('not here'))), listClosures: vi.fn(async () => []) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: PeopleEditDialog } = await import('@/components/people/PeopleEditDialog.vue')
const { useKindsStore } = await import('@/stores/operation-kinds')

const kind = (id: number, name: string, outside = false): OperationKind => ({
  id,
  workshopId: 1,
  code: name.toLowerCase(),
  name,
  outside,
  hazards: [],
  color: '#777777',
  version: 0,
})
const KINDS = [kind(1, 'Casting', true), kind(2, 'Setting'), kind(3, 'Polishing')]

const mountEditor = (modelValue: SkillInput[]) => mount(PeopleSkillsEditor, { props: { modelValue, kinds: KINDS }, global: { plugins: [ElementPlus] } })

describe('PeopleSkillsEditor', () => {
  it('when "Add a skill" is clicked, then it emits the list with the first unused bench kind at level 1 and speed 1', async () => {
    const w = mountEditor([{ kindId: 2, level: 3, speed: 1.15 }])
    await w.find('[data-test=skill-add]').trigger('click')
    expect(w.emitted('update:modelValue')?.[0]?.[0]).toEqual([
      { kindId: 2, level: 3, speed: 1.15 },
      { kindId: 3, level: 1, speed: 1 },
    ])
  })

  it('when a level button is picked, then only that skill changes level', async () => {
    const w = mountEditor([
      { kindId: 2, level: 1, speed: 0.6 },
      { kindId: 3, level: 2, speed: 1 },
    ])
    const firstRow = w.findAll('[data-test=skill-row]')[0]!
    const expert = firstRow.findAll('input[type=radio]').find((i) => (i.element as HTMLInputElement).value === '3')!
    await expert.setValue(true)
    expect(w.emitted('update:modelValue')?.at(-1)?.[0]).toEqual([
      { kindId: 2, level: 3, speed: 0.6 },
      { kindId: 3, level: 2, speed: 1 },
    ])
  })

  it('when a skill is removed, then the list without it is emitted and the props are not mutated', async () => {
    const skills = [
      { kindId: 2, level: 1, speed: 0.6 },
      { kindId: 3, level: 2, speed: 1 },
    ]
    const w = mountEditor(skills)
    await w.findAll('[data-test=skill-remove]')[0]!.trigger('click')
    expect(w.emitted('update:modelValue')?.[0]?.[0]).toEqual([{ kindId: 3, level: 2, speed: 1 }])
    expect(skills).toHaveLength(2)
  })

  it('when reasons are given for a row, then they show next to that row', async () => {
    const w = mount(PeopleSkillsEditor, {
      props: { modelValue: [{ kindId: 2, level: 1, speed: 5 }], kinds: KINDS, errors: { '0.speed': 'Must be between 0.3 and 3' } },
      global: { plugins: [ElementPlus] },
    })
    // Element Plus shows a form item's error after a short debounce.
    await new Promise((r) => setTimeout(r, 200))
    expect(w.find('[data-test=skill-row]').text()).toContain('Must be between 0.3 and 3')
  })
})

describe('a skill’s speed in the person’s form', { timeout: 30_000 }, () => {
  let d: VueWrapper | undefined
  afterEach(() => {
    d?.unmount()
    d = undefined
    document.body.innerHTML = ''
    api.updatePerson.mockReset()
  })
  const PERSON: Person = {
    id: 6,
    version: 4,
    name: 'Ines Farrow',
    userId: null,
    userEmail: null,
    weekPattern: null,
    active: true,
    skills: [{ kindId: 2, level: 2, speed: 1 }],
    leave: [],
  }
  const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)

  it('when a speed of 5 is typed and the person saved, then 5 stays, the row says it must be between 0.3 and 3, and nothing is sent', async () => {
    const pinia = createPinia()
    useKindsStore(pinia).items = KINDS
    d = mount(PeopleEditDialog, { props: { open: true, person: PERSON }, attachTo: document.body, global: { plugins: [ElementPlus, pinia] } })
    await flushPromises()
    const input = q('[data-test=skill-speed] input') as HTMLInputElement
    input.value = '5'
    input.dispatchEvent(new Event('input'))
    input.dispatchEvent(new Event('change'))
    input.dispatchEvent(new FocusEvent('blur'))
    await flushPromises()
    expect(input.value).toBe('5.00')
    ;(q('[data-test=person-save]') as HTMLButtonElement).click()
    await flushPromises()
    // Element Plus shows a form item's error after a short debounce.
    await new Promise((r) => setTimeout(r, 200))
    expect(q('[data-test=skill-row]')?.textContent).toContain('Must be between 0.3 and 3')
    expect(api.updatePerson).not.toHaveBeenCalled()
  })
})
