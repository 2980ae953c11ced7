// Learned figures (a person's pace, a routing step's suggestion) say how many finished operations they leave out, as the Insights
// tables do: a pace resting on 7 records with 2 left running overnight reads "n = 7 … +2 out", with the reason in its tooltip.
import { afterEach, describe, expect, it } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { PersonFigure } from '@shared/schemas/insights'
import InsightsPeoplePace from '@/components/insights/InsightsPeoplePace.vue'

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
})

const person = (leftOut: number): PersonFigure => ({
  personId: 3,
  name: 'Wren Alder',
  speed: 1.1,
  history: { n: 7, leftOut, from: '2026-11-02', to: '2026-11-27', spread: { q1: 0.95, median: 1.1, q3: 1.2, mad: 0.08 } },
  kinds: [{ kindId: 1, kind: 'Setting', n: 7, learned: 1.1, configured: 1.15 }],
})

describe('a person’s learned pace', () => {
  it('when some of their records were left out, then the history says how many beside n', async () => {
    w = mount(InsightsPeoplePace, { props: { people: [person(2)] }, global: { plugins: [ElementPlus] } })
    await flushPromises()
    expect(w.text()).toContain('n = 7 · 2026-11-02 to 2026-11-27')
    expect(w.get('[data-test="history-left-out"]').text()).toBe('· +2 out')
  })

  it('when none were left out, then nothing is added', async () => {
    w = mount(InsightsPeoplePace, { props: { people: [person(0)] }, global: { plugins: [ElementPlus] } })
    await flushPromises()
    expect(w.find('[data-test="history-left-out"]').exists()).toBe(false)
  })
})
