// The skills editor: adding, changing and removing skills emits the whole new list.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { OperationKind } from '@shared/schemas/operation-kind'
import type { SkillInput } from '@shared/schemas/person'
import PeopleSkillsEditor from '@/components/people/PeopleSkillsEditor.vue'

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
