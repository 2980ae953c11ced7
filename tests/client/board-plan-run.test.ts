// The planner's progress dialog: the lateness figure with its unit and its meaning in words, and the live plan's line in pieces.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import BoardPlanRun from '@/components/board/BoardPlanRun.vue'
import type { PlanRun } from '@shared/schemas/plan'

const run: PlanRun = {
  id: 'r1',
  status: 'running',
  startedAt: '2026-12-03T10:00:00.000Z',
  timeLimitSeconds: 10,
  progress: null,
  planId: null,
  error: null,
  note: null,
  stability: 'small-changes',
}

describe('BoardPlanRun', () => {
  it('when a run reports its weighted lateness, then the dialog shows hours late × priority with its unit and says what that is', async () => {
    // Hand-worked: 109,344 weighted minutes ÷ 60 = 1,822.4 h late × priority; the live plan's 2,000.5 h with 4 pieces late.
    mount(BoardPlanRun, {
      props: {
        open: true,
        run,
        progress: { iteration: 1200, weightedTardiness: 109_344, makespan: 6000, elapsedMs: 3000 },
        timeZone: 'Europe/London',
        now: '2026-12-03T10:00:00.000Z',
        baseline: { weightedTardinessHours: 2000.5, lateJobs: 4 },
        starting: false,
      },
      global: { plugins: [ElementPlus] },
      attachTo: document.body,
    })
    await flushPromises()
    const text = document.querySelector('[data-test=plan-progress]')?.textContent ?? ''
    expect(document.querySelector('[data-test=plan-progress-lateness]')?.textContent?.trim()).toBe('1,822.4')
    expect(text).toMatch(/Hours late × priority\s*1,822\.4 h/)
    expect(text).toContain("times its order's priority (1–5), added up. Lower is better; 0 means no piece late.")
    expect(text).toContain('Live plan: 2,000.5 h late × priority, 4 pieces late')
    expect(text).not.toMatch(/Lateness score|jobs late/i)
  })

  it('when a run ended with no better plan, then the dialog says the live plan stays, with the figures it was given, and offers no Stop', async () => {
    const note = 'No better plan found in 10 s: the live plan stays as it is. The best plan found is 3.5 h late × priority, the live plan 2 h.'
    const props = {
      open: true,
      run: { ...run, status: 'done' as const, note },
      progress: { iteration: 1200, weightedTardiness: 210, makespan: 6000, elapsedMs: 10_000 },
      timeZone: 'Europe/London',
      now: '2026-12-03T10:00:00.000Z',
      baseline: null,
      starting: false,
    }
    const w = mount(BoardPlanRun, { props, global: { plugins: [ElementPlus] }, attachTo: document.body })
    await flushPromises()
    // This test's dialog: the newest on the page.
    const dialog = () => [...document.querySelectorAll('[data-test=plan-run-dialog]')].at(-1)!
    expect(dialog().querySelector('[data-test=plan-no-better]')?.textContent).toContain(note)
    expect(dialog().querySelector('[data-test=plan-stop]')).toBeNull()
    // A run stored without words still says what happened.
    await w.setProps({ run: { ...props.run, note: null } })
    expect(dialog().querySelector('[data-test=plan-no-better]')?.textContent).toContain('No better plan found: the live plan stays as it is.')
    w.unmount()
  })
})
