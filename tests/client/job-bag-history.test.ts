// The job bag's history says stone list changes and stone counts in words, never as the audit log's action codes.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import type { HistoryEntry } from '@shared/schemas/job-bag'
import JobBagHistory from '@/components/jobbag/JobBagHistory.vue'

const at = '2026-12-02T10:15:00.000Z'
const entry = (action: string, details: Record<string, unknown>): HistoryEntry => ({
  at,
  kind: 'audit',
  action,
  operationId: null,
  who: 'Ines Farrow',
  details,
})

describe('JobBagHistory', () => {
  it('when stones are added, counted, corrected and handed back, then each line reads as a sentence naming the stones', () => {
    const w = mount(JobBagHistory, {
      props: {
        operations: [],
        entries: [
          entry('add-stones', { count: 18, sizeMm: 1.3, shape: 'round', stone: 'diamond', role: 'pave' }),
          entry('count-stones', {
            line: '18 × 1.3 mm round diamond',
            entries: [
              { kind: 'set', count: 17 },
              { kind: 'returned', count: 1 },
            ],
          }),
          entry('correct-stones', { line: '18 × 1.3 mm round diamond', kind: 'set', from: 17, to: 16, reason: 'one fell out at polishing' }),
          entry('hand-back-stones', { line: '1 × 6.5 mm round diamond', count: 1 }),
        ],
      },
      global: { plugins: [createPinia()] },
    })
    const lines = w.findAll('.jb-history__what').map((x) => x.text())
    // Expected sentences written by hand from the entries above.
    expect(lines).toEqual([
      'Ines Farrow added 18 × 1.3 mm round diamond to the stone list',
      'Ines Farrow counted 18 × 1.3 mm round diamond: 17 set, 1 returned',
      'Ines Farrow corrected the count of 18 × 1.3 mm round diamond (set) from 17 to 16 — one fell out at polishing',
      "Ines Farrow handed back 1 of the customer's 1 × 6.5 mm round diamond",
    ])
    expect(w.text()).not.toMatch(/count-stones|add-stones|correct-stones|hand-back-stones/)
  })
})
