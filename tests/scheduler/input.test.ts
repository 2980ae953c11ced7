// Bad input is refused with a SchedulingInputError that names the job and operation.
import { describe, it, expect } from 'vitest'
import { checkProblem, solve, SchedulingInputError, type Problem } from '../../server/scheduler/index.ts'
import { at, makeBench, makeJob, makeOperation, makePerson, makeProblem } from './builders.ts'

const refusal = (p: Problem): SchedulingInputError => {
  try {
    checkProblem(p)
  } catch (e) {
    expect(e).toBeInstanceOf(SchedulingInputError)
    return e as SchedulingInputError
  }
  throw new Error('expected a SchedulingInputError')
}

describe('checkProblem', () => {
  it('when the input is sound, then it passes and solve plans it', () => {
    const p = makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 30] })] })
    expect(() => checkProblem(p)).not.toThrow()
    expect(solve(p, { seed: 1, timeLimitMs: 50 }).score.feasible).toBe(true)
  })
  it('when no bench and person can do an operation, then "no-option" names it', () => {
    const e = refusal(makeProblem({ operations: [makeOperation({ id: 'set', jobId: 'ring', name: 'stone setting', options: [] })] }))
    expect(e).toMatchObject({ code: 'no-option', jobId: 'ring', operationId: 'set' })
    expect(e.message).toContain('stone setting')
  })
  it('when a routing has a cycle, then "routing-cycle" lists the operations on it', () => {
    const e = refusal(
      makeProblem({
        operations: [
          makeOperation({ id: 'a', jobId: 'j', predecessors: ['c'], on: ['b1', 'p1', 10] }),
          makeOperation({ id: 'b', jobId: 'j', predecessors: ['a'], on: ['b1', 'p1', 10] }),
          makeOperation({ id: 'c', jobId: 'j', predecessors: ['b'], on: ['b1', 'p1', 10] }),
        ],
      }),
    )
    expect(e.code).toBe('routing-cycle')
    expect(e.message).toMatch(/"a".*"c".*"b"|"a".*"b".*"c"/)
  })
  it('when a predecessor is unknown, then "unknown-predecessor" is raised', () => {
    expect(refusal(makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', predecessors: ['ghost'], on: ['b1', 'p1', 10] })] }))).toMatchObject({
      code: 'unknown-predecessor',
      operationId: 'a',
    })
  })
  it('when a predecessor belongs to another job, then "foreign-predecessor" is raised', () => {
    const e = refusal(
      makeProblem({
        operations: [
          makeOperation({ id: 'x', jobId: 'j1', on: ['b1', 'p1', 10] }),
          makeOperation({ id: 'y', jobId: 'j2', predecessors: ['x'], on: ['b1', 'p1', 10] }),
        ],
      }),
    )
    expect(e).toMatchObject({ code: 'foreign-predecessor', jobId: 'j2', operationId: 'y' })
  })
  it('when pinned work sits outside working time, then "fixed-outside-working-time" is raised', () => {
    const e = refusal(
      makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 30], fixed: { benchId: 'b1', personId: 'p1', start: at(0, 20) } })] }),
    )
    expect(e).toMatchObject({ code: 'fixed-outside-working-time', operationId: 'a' })
  })
  it('when running work is pinned to end after the day has closed, then "fixed-outside-working-time" is raised', () => {
    // The bench and the person stop at 16:00; a plan cannot both keep the end at 18:00 and work only in working time.
    const fixed = { benchId: 'b1', personId: 'p1', start: at(0, 15), end: at(0, 18) }
    const e = refusal(makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 30], fixed })] }))
    expect(e).toMatchObject({ code: 'fixed-outside-working-time', operationId: 'a' })
  })
  it('when running work is pinned to end at the close of the day or inside it, then it passes and the plan keeps the end', () => {
    for (const end of [at(0, 16), at(0, 15, 20)]) {
      const fixed = { benchId: 'b1', personId: 'p1', start: at(0, 15), end }
      const p = makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 30], fixed })] })
      const plan = solve(p, { seed: 1, timeLimitMs: 50 })
      expect(plan.score.violations).toEqual([])
      expect(plan.operations[0]).toMatchObject({ start: at(0, 15), end, segments: [{ start: at(0, 15), end }] })
    }
  })
  it('when pinned work runs past the horizon once its lunch break is counted, then "beyond-horizon" is raised', () => {
    // By hand: from 11:00, 60 min before lunch and 240 min after it leave 30 of its 330 min past the horizon at 17:00.
    const day = [
      { start: at(0, 8), end: at(0, 12) },
      { start: at(0, 13), end: at(0, 17) },
    ]
    const p = makeProblem({
      horizon: at(0, 17),
      workshopDays: [{ start: at(0, 8), end: at(0, 17) }],
      benches: [makeBench({ id: 'b1', available: day })],
      people: [makePerson({ id: 'p1', available: day })],
      operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 330], fixed: { benchId: 'b1', personId: 'p1', start: at(0, 11) } })],
    })
    expect(refusal(p)).toMatchObject({ code: 'beyond-horizon', operationId: 'a' })
  })
  it('when outside work is pinned to a bench, then "unknown-resource" is raised', () => {
    // Outside work is planned with no bench and no person, so no plan can keep this pin.
    const fixed = { benchId: 'b1', personId: null, start: at(0, 9) }
    const e = refusal(makeProblem({ operations: [makeOperation({ id: 'cast', jobId: 'j', outsideWorkingDays: 1, fixed })] }))
    expect(e).toMatchObject({ code: 'unknown-resource', operationId: 'cast' })
    expect(e.message).toContain('Bench b1')
  })
  it('when work at the bench is pinned to end where it starts, then "bad-duration" is raised', () => {
    const fixed = { benchId: 'b1', personId: 'p1', start: at(0, 9), end: at(0, 9) }
    const e = refusal(makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 30], fixed })] }))
    expect(e).toMatchObject({ code: 'bad-duration', operationId: 'a' })
  })
  it.each([0, -5, Number.NaN, 1e9])('when a duration is %s minutes, then "bad-duration" is raised', (minutes) => {
    expect(refusal(makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', minutes] })] })).code).toBe('bad-duration')
  })
  it('when work cannot finish before the horizon, then "beyond-horizon" is raised', () => {
    const e = refusal(
      makeProblem({ jobs: [makeJob({ id: 'j', release: at(11, 8) })], operations: [makeOperation({ id: 'a', jobId: 'j', on: ['b1', 'p1', 30 * 60] })] }),
    )
    expect(e).toMatchObject({ code: 'beyond-horizon', jobId: 'j', operationId: 'a' })
  })
  it('when the load as a whole does not fit before the horizon, then solve reports "beyond-horizon"', () => {
    const ops = Array.from({ length: 12 }, (_, k) => makeOperation({ id: `o${k}`, jobId: `j${k}`, on: ['b1', 'p1', 8 * 60] }))
    expect(() => solve(makeProblem({ operations: ops }), { seed: 1, timeLimitMs: 50 })).toThrow(expect.objectContaining({ code: 'beyond-horizon' }))
  })
})
