// The plan versions drawer: a comparison with the live plan lists each change by job bag number and step.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import BoardVersionsDrawer from '@/components/board/BoardVersionsDrawer.vue'
import type { PlanComparison, PlanMove, PlanVersion } from '@shared/schemas/plan'

const draft: PlanVersion = {
  id: 9,
  number: 4,
  status: 'draft',
  createdAt: '2026-12-03T10:00:00.000Z',
  publishedAt: null,
  score: { lateJobs: 2, lateWorkingMinutes: 600, dayMinutes: 480 },
  createdBy: 1,
  publishedBy: null,
  createdByName: 'Sam Ottery',
  publishedByName: null,
}
const at = (h: number) => new Date(Date.UTC(2026, 11, 7, h)).toISOString()
/** A change as GET /plans/:id/compare answers it: named by job bag number and step. */
const move = {
  operationId: 373,
  jobBagId: 64,
  jobBagNumber: 'MG26-0064-1',
  name: 'Polish',
  from: { operationId: 373, benchId: 1, personId: 2, start: at(9), end: at(10) },
  to: { operationId: 373, benchId: 1, personId: 2, start: at(11), end: at(12) },
  change: ['time'] as PlanMove['change'],
}
const comparison: PlanComparison = {
  planId: 9,
  against: 'live',
  moves: [move],
  counts: { bench: 0, person: 0, time: 1, new: 0 },
  gains: { earlier: 0, later: 1, lessLate: 0, moreLate: 0 },
}

describe('BoardVersionsDrawer', () => {
  it('when a compared change is outside the board window, then it is still listed by job bag number and step, not by its id', async () => {
    mount(BoardVersionsDrawer, {
      props: {
        open: true,
        versions: [draft],
        comparison,
        comparing: null,
        items: new Map(),
        benchName: new Map([[1, 'Bench 1']]),
        personName: new Map([[2, 'Ada']]),
        timeZone: 'Europe/London',
      },
      global: { plugins: [ElementPlus] },
      attachTo: document.body,
    })
    await flushPromises()
    const text = document.querySelector('[data-test=plan-comparison]')?.textContent ?? ''
    expect(text).toContain('MG26-0064-1 Polish')
    expect(text).not.toMatch(/Operation 373/)
  })
})
