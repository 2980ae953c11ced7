// Start reasons recomputed from the plan as it stands: a move by hand changes what holds the next step back (hand-worked cases).
import { describe, it, expect } from 'vitest'
import { explainStarts, type Problem } from '../../server/scheduler/index.ts'
import { at, makeBench, makeJob, makeOperation, makePerson, makeProblem } from './builders.ts'

// Mon 08:00–12:00 and 13:00–16:00 for everyone.
const day = [
  { start: at(0, 8), end: at(0, 12) },
  { start: at(0, 13), end: at(0, 16) },
]
const problem: Problem = makeProblem({
  benches: [makeBench({ id: 'b1', name: 'Setting bench A', available: day }), makeBench({ id: 'b2', name: 'Setting bench B', available: day })],
  people: [makePerson({ id: 'p1', name: 'Ada', available: day }), makePerson({ id: 'p2', name: 'Ben', available: day })],
  now: at(0, 8),
  jobs: [makeJob({ id: 'j1' }), makeJob({ id: 'j2' })],
  operations: [
    makeOperation({
      id: 'a',
      jobId: 'j1',
      name: 'set stones',
      options: [
        { benchId: 'b1', personId: 'p1', minutes: 60 },
        { benchId: 'b2', personId: 'p2', minutes: 60 },
      ],
      waitAfter: 15,
    }),
    makeOperation({ id: 'b', jobId: 'j2', name: 'set bezel', on: ['b1', 'p1', 60] }),
    makeOperation({ id: 'c', jobId: 'j1', name: 'polish', predecessors: ['a'], on: ['b2', 'p2', 30] }),
  ],
})

describe('start reasons from the plan as it stands', () => {
  it('when B follows A on the same bench, then B waits for the bench; the polish waits for A and its 15-min wait', () => {
    const why = explainStarts(problem, [
      { operationId: 'a', benchId: 'b1', personId: 'p1', start: at(0, 8), end: at(0, 9) },
      { operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 9), end: at(0, 10) },
      { operationId: 'c', benchId: 'b2', personId: 'p2', start: at(0, 9, 15), end: at(0, 9, 45) },
    ])
    expect(why.get('a')?.kind).toBe('now')
    expect(why.get('b')).toMatchObject({ kind: 'bench', blockerId: 'a' })
    expect(why.get('b')?.detail).toContain('Setting bench A')
    expect(why.get('c')).toMatchObject({ kind: 'predecessor', blockerId: 'a' })
  })
  it('when A is moved by hand to bench B, then B no longer waits for "Setting bench A" and says it could start an hour earlier', () => {
    const why = explainStarts(problem, [
      { operationId: 'a', benchId: 'b2', personId: 'p2', start: at(0, 8), end: at(0, 9) },
      { operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 9), end: at(0, 10) },
      { operationId: 'c', benchId: 'b2', personId: 'p2', start: at(0, 9, 15), end: at(0, 9, 45) },
    ])
    expect(why.get('b')?.kind).toBe('by-hand')
    expect(why.get('b')?.detail).not.toContain('Setting bench A')
    // 08:00–09:00 free on bench A with Ada: 60 working minutes (hand-worked).
    expect(why.get('b')?.detail).toContain('1 h')
  })
  it('when a step starts at 13:00 after lunch with nothing else in the way, then it starts as soon as planning allows (nothing but the lunch break before it)', () => {
    const why = explainStarts({ ...problem, now: at(0, 12, 10) }, [{ operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 13), end: at(0, 14) }])
    expect(why.get('b')?.kind).toBe('now')
  })
})
