// What counts as a change between two plans: bench, person or start — but not a step both plans start at or before the moment
// of comparing (each sent it out as soon as it was made) that comes back the same minute. Cases worked out by hand.
import { describe, expect, it } from 'vitest'
import { diffAssignments } from '../../server/planning/drafts'
import type { Assignments } from '../../server/planning/assignments'

const plan = (rows: [id: number, bench: number | null, person: number | null, start: string, end: string][]): Assignments =>
  new Map(rows.map(([operationId, benchId, personId, start, end]) => [operationId, { operationId, benchId, personId, start, end }]))
const NOW = new Date('2026-12-04T23:47:00Z')

describe('changes between two plans', () => {
  it('when a casting went out at 22:21 in the live plan and at 23:47 in the draft, back the same day, then it has not moved', () => {
    const live = plan([[12, null, null, '2026-12-04T22:21:00Z', '2026-12-11T17:00:00Z']])
    const draft = plan([[12, null, null, '2026-12-04T23:47:00Z', '2026-12-11T17:00:00Z']])
    expect(diffAssignments(live, draft, NOW)).toEqual([])
  })

  it('when the same casting comes back a day later, then its time changed', () => {
    const live = plan([[12, null, null, '2026-12-04T22:21:00Z', '2026-12-11T17:00:00Z']])
    const draft = plan([[12, null, null, '2026-12-04T23:47:00Z', '2026-12-14T17:00:00Z']])
    expect(diffAssignments(live, draft, NOW).map((m) => m.change)).toEqual([['time']])
  })

  it('when a step moves to later in the week, or to another bench, then it is a change as before', () => {
    const live = plan([
      [20, 1, 4, '2026-12-07T09:00:00Z', '2026-12-07T10:00:00Z'],
      [21, 1, 4, '2026-12-04T22:00:00Z', '2026-12-07T09:30:00Z'],
    ])
    const draft = plan([
      [20, 1, 4, '2026-12-08T09:00:00Z', '2026-12-08T10:00:00Z'],
      [21, 2, 4, '2026-12-04T23:00:00Z', '2026-12-07T09:30:00Z'],
    ])
    expect(diffAssignments(live, draft, NOW).map((m) => [m.operationId, m.change])).toEqual([
      [20, ['time']],
      [21, ['bench', 'time']],
    ])
  })
})
