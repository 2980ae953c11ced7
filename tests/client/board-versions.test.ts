// The plan versions drawer: a comparison with the live plan lists each change by job bag number and step.
import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises, mount } from '@vue/test-utils'
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

// Each test's drawer is teleported to the page's body: unmounted after the test, so the next one sees only its own.
enableAutoUnmount(afterEach)

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

  it('when a draft moves 15 bars, then 12 are listed with "and 3 more", and the toggle shows all 15 and back', async () => {
    // Fifteen steps, each put two hours later: operations 401–415, named Step 1–15.
    const moves = Array.from({ length: 15 }, (_, i) => ({ ...move, operationId: 401 + i, name: `Step ${i + 1}` }))
    mount(BoardVersionsDrawer, {
      props: {
        open: true,
        versions: [draft],
        comparison: { ...comparison, moves, counts: { bench: 0, person: 0, time: 15, new: 0 } },
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
    const listed = () => [...document.querySelectorAll('[data-test=plan-comparison] li')].map((li) => li.querySelector('.version__op')?.textContent)
    const box = () => document.querySelector('[data-test=plan-comparison]')?.textContent ?? ''
    expect(listed()).toHaveLength(12)
    expect(listed()[11]).toBe('MG26-0064-1 Step 12')
    expect(box()).toContain('15 bars differ')
    expect(box()).toContain('and 3 more')
    const toggle = document.querySelector<HTMLButtonElement>('button[data-test=plan-compare-all]')!
    expect(toggle, 'a button that shows the rest').not.toBeNull()
    expect(toggle.textContent?.trim()).toBe('Show all 15')
    expect(toggle.getAttribute('aria-expanded')).toBe('false')
    toggle.click()
    await flushPromises()
    expect(listed()).toHaveLength(15)
    expect(listed()[14]).toBe('MG26-0064-1 Step 15')
    expect(box()).toContain('15 bars differ')
    expect(box()).not.toContain('more')
    expect(toggle.getAttribute('aria-expanded')).toBe('true')
    expect(toggle.textContent?.trim()).toBe('Show the first 12 only')
    toggle.click()
    await flushPromises()
    expect(listed()).toHaveLength(12)
  })

  it('when three bars differ (one to another person, one to another bench and person, one only in time), then the drawer counts each once, as the banner does', async () => {
    const change = (operationId: number, c: PlanMove['change']) => ({ ...move, operationId, change: c })
    mountWith({
      ...comparison,
      moves: [change(1, ['person']), change(2, ['bench', 'person', 'time']), change(3, ['time'])],
      counts: { bench: 1, person: 2, time: 2, new: 0 },
    })
    await flushPromises()
    // 1 + 1 elsewhere and 1 only in time: 2 + 1 = 3 bars.
    expect(summary()).toBe('3 bars differ: 2 to another bench or person (1 another person, 1 both), 1 only in time')
  })

  it('when one bar differs, then it reads in the singular', async () => {
    mountWith(comparison)
    await flushPromises()
    expect(summary()).toBe('1 bar differs: 1 only in time')
  })

  it('when the changes come with newly planned steps last, then the whole list, shown in full, runs by job bag number and then by time', async () => {
    const m = (operationId: number, jobBagNumber: string, hour: number, c: PlanMove['change'] = ['time']) => ({
      ...move,
      operationId,
      jobBagNumber,
      name: `Op ${operationId}`,
      from: c.includes('new') ? null : { ...move.from, operationId, start: at(hour) },
      to: { ...move.to, operationId, start: at(hour + 1) },
      change: c,
    })
    // Twelve changes to bags 0003 and 0010 in the live plan's order, then three newly planned steps of bags 0002, 0010 and 0003.
    const moves = [
      ...Array.from({ length: 6 }, (_, i) => m(500 + i, 'MG26-0003-1', 8 + i)),
      ...Array.from({ length: 6 }, (_, i) => m(520 + i, 'MG26-0010-1', 8 + i)),
      m(540, 'MG26-0002-1', 9, ['new']),
      m(541, 'MG26-0010-1', 7, ['new']),
      m(542, 'MG26-0003-1', 20, ['new']),
    ]
    mountWith({ ...comparison, moves, counts: { bench: 0, person: 0, time: 12, new: 3 } })
    await flushPromises()
    document.querySelector<HTMLButtonElement>('button[data-test=plan-compare-all]')!.click()
    await flushPromises()
    const listed = [...document.querySelectorAll('[data-test=plan-comparison] li .version__op')].map((e) => e.textContent)
    expect(listed).toEqual([
      'MG26-0002-1 Op 540',
      ...[500, 501, 502, 503, 504, 505, 542].map((id) => `MG26-0003-1 Op ${id}`),
      ...[541, 520, 521, 522, 523, 524, 525].map((id) => `MG26-0010-1 Op ${id}`),
    ])
  })
})

function mountWith(c: PlanComparison) {
  return mount(BoardVersionsDrawer, {
    props: {
      open: true,
      versions: [draft],
      comparison: c,
      comparing: null,
      items: new Map(),
      benchName: new Map([[1, 'Bench 1']]),
      personName: new Map([[2, 'Ada']]),
      timeZone: 'Europe/London',
    },
    global: { plugins: [ElementPlus] },
    attachTo: document.body,
  })
}
/** The comparison's line above its list: the total and its parts. */
const summary = () => document.querySelector('[data-test=plan-comparison] > .mg-small')?.textContent?.replace(/\s+/g, ' ').trim()
