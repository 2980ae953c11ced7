// The closures table: each closure's days are counted against the workshop's week shown beside it.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { Closure } from '@shared/schemas/calendar'
import type { WorkSpan } from '@shared/schemas/common'
import CalendarClosures from '@/components/calendar/CalendarClosures.vue'

const closure = (id: number, name: string, startsOn: string, endsOn: string): Closure => ({ id, workshopId: 1, name, startsOn, endsOn })
/** Monday to Friday, 09:00–17:30 (weekday 1 Mon … 5 Fri). */
const MON_FRI: WorkSpan[] = [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '09:00', end: '17:30' }))

async function daysShown(closures: Closure[], weekPattern: WorkSpan[]) {
  const w = mount(CalendarClosures, {
    props: { closures, weekPattern, editable: false },
    attachTo: document.body,
    global: { plugins: [ElementPlus, createPinia()] },
  })
  // The table lays its rows out after mounting.
  await flushPromises()
  const shown = w.findAll('[data-test=closure-days]').map((c) => c.text())
  w.unmount()
  return shown
}

describe('CalendarClosures', () => {
  it('when a closure runs Friday 25 to Monday 28 December 2026 on a Monday–Friday week, then it reads 2 working days of 4 calendar days', async () => {
    // By hand: 25 Dec 2026 is a Friday (1 Jan 2027 is a Friday, 7 days later), so 25 Fri, 26 Sat, 27 Sun, 28 Mon:
    // 4 calendar days, of which Friday and Monday are open on a Monday–Friday week.
    expect(await daysShown([closure(1, 'Christmas', '2026-12-25', '2026-12-28')], MON_FRI)).toEqual(['2 working days (4 calendar days)'])
  })

  it('when the week also opens on Saturday, then the same closure takes 3 working days; a one-day closure on Wednesday 30 December reads 1 working day', async () => {
    const withSaturday = [...MON_FRI, { weekday: 6, start: '10:00', end: '14:00' }]
    expect(await daysShown([closure(1, 'Christmas', '2026-12-25', '2026-12-28'), closure(2, 'Stocktake', '2026-12-30', '2026-12-30')], withSaturday)).toEqual([
      '3 working days (4 calendar days)',
      '1 working day',
    ])
  })
})
