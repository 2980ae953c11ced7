// A job bag's worked time: its history's records, to the second under ten minutes, add up to the step's actual time in the routing.
import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { HistoryEntry, JobBagOperation } from '@shared/schemas/job-bag'
import JobBagHistory from '@/components/jobbag/JobBagHistory.vue'
import JobBagRouting from '@/components/jobbag/JobBagRouting.vue'
import { workedByOperation, workedWords } from '@/lib/worked-time'

// Hand-worked: 10:00:00.000–10:01:42.900 is 102.9 s → 103 s = 1 min 43 s; 10:05:00.000–10:06:42.700 is 102.7 s → 103 s = 1 min 43 s;
// together 206 s = 3 min 26 s (the stored minutes, 1.7 + 1.7, would have read "2 min" twice against "3 min").
const records = [
  { id: 1, startedAt: '2026-12-02T10:00:00.000Z', endedAt: '2026-12-02T10:01:42.900Z', minutes: 1.7, endReason: 'break' },
  { id: 2, startedAt: '2026-12-02T10:05:00.000Z', endedAt: '2026-12-02T10:06:42.700Z', minutes: 1.7, endReason: 'finished' },
]
const entries: HistoryEntry[] = records.map((r) => ({
  at: r.startedAt,
  kind: 'time',
  action: 'time',
  operationId: 9,
  who: 'Ines Farrow',
  details: { timeRecordId: r.id, startedAt: r.startedAt, endedAt: r.endedAt, minutes: r.minutes, endReason: r.endReason, note: '' },
}))
const op = {
  id: 9,
  key: 'retip',
  name: 'Retip claws',
  status: 'done',
  actualMinutes: 3.4,
  estimateMinutes: 45,
  estimateSource: 'routing',
  estimateChanges: [],
  hazards: [],
  cautions: [],
  waitingFor: [],
  after: [],
  outside: false,
  leadDays: 0,
  claimedByName: null,
} as unknown as JobBagOperation

describe('worked time on the job bag page', () => {
  it('when a step was worked 102.9 s and 102.7 s, then the history says 1 min 43 s twice', () => {
    const w = mount(JobBagHistory, { props: { entries, operations: [op] }, global: { plugins: [createPinia()] } })
    const lines = w.findAll('.jb-history__what').map((x) => x.text())
    // The pause reason's name comes from the workshop's list (not loaded here), so the history shows its code.
    expect(lines[0]).toBe('Ines Farrow worked 1 min 43 s on “Retip claws” — break')
    expect(lines[1]).toBe('Ines Farrow worked 1 min 43 s on “Retip claws” — finished')
  })

  it('when the routing shows the same step, then its actual time is their sum, 3 min 26 s', async () => {
    const worked = workedByOperation(records.map((r) => ({ ...r, operationId: 9, voided: false })))
    expect(worked.get(9)).toBe(206)
    const w = mount(JobBagRouting, { props: { operations: [op], editable: false, worked }, global: { plugins: [ElementPlus] } })
    await flushPromises()
    expect(w.find('[data-test=actual-9]').text()).toBe('3 min 26 s')
  })

  it('when worked time is under a minute, a whole number of minutes, or ten minutes and more, then it reads 45 s, 2 min, 13 min', () => {
    expect(workedWords(45)).toBe('45 s')
    expect(workedWords(120)).toBe('2 min')
    expect(workedWords(754)).toBe('13 min')
  })
})
