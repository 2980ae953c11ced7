// Bad input is refused with a SchedulingInputError that names the job and operation.
import { describe, it, expect } from 'vitest'
import { checkProblem, solve, SchedulingInputError, type Problem } from '../../server/scheduler/index.ts'
import { at, makeBench, makeJob, makeOperation, makePerson, makeProblem, weekdays } from './builders.ts'

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

  describe('pinned and running work holding one bench or person at once', () => {
    // Hand-worked on the builders' calendar (weekdays 08:00–16:00): no plan can keep two fixed steps on one bench or person in
    // the same minutes, so the input is refused with both named, instead of planning a double booking.
    const people = [makePerson({ id: 'p1', name: 'Ines' }), makePerson({ id: 'p2', name: 'Odo' })]
    const benches = [makeBench({ id: 'b1', name: 'Setting' }), makeBench({ id: 'b2', name: 'Polishing' })]
    it('when two pins share a bench for half an hour, then "fixed-overlap" names both and the clash', () => {
      // a: 09:00 + 120 min = 11:00; b: 10:00 + 30 min. They clash 10:00–10:30 on the bench (their people differ).
      const e = refusal(
        makeProblem({
          benches,
          people,
          operations: [
            makeOperation({ id: 'a', jobId: 'ring', on: ['b1', 'p1', 120], fixed: { benchId: 'b1', personId: 'p1', start: at(0, 9) } }),
            makeOperation({ id: 'b', jobId: 'brooch', on: ['b1', 'p2', 30], fixed: { benchId: 'b1', personId: 'p2', start: at(0, 10) } }),
          ],
        }),
      )
      expect(e).toMatchObject({ code: 'fixed-overlap', jobId: 'brooch', operationId: 'b' })
      expect(e.message).toContain('bench Setting')
      expect(e.message).toContain('"a"')
      expect(e.message).toContain(`from minute ${at(0, 10)} to ${at(0, 10, 30)}`)
    })
    it('when running work and a pin share a person on two benches, then "fixed-overlap" names the person', () => {
      // Running 14:00–15:00 on b1; pinned from 14:30 on b2 with the same person: 14:30–15:00 clash.
      const e = refusal(
        makeProblem({
          benches,
          people,
          operations: [
            makeOperation({ id: 'run', jobId: 'j1', on: ['b1', 'p1', 60], fixed: { benchId: 'b1', personId: 'p1', start: at(1, 14), end: at(1, 15) } }),
            makeOperation({ id: 'pin', jobId: 'j2', on: ['b2', 'p1', 60], fixed: { benchId: 'b2', personId: 'p1', start: at(1, 14, 30) } }),
          ],
        }),
      )
      expect(e).toMatchObject({ code: 'fixed-overlap', operationId: 'pin' })
      expect(e.message).toContain('Ines')
      expect(e.message).toContain(`from minute ${at(1, 14, 30)} to ${at(1, 15)}`)
    })
    it('when a third pin overlaps the first past a short second one, then it is still found', () => {
      // a 08:00–12:00; b 09:00–09:30 on the bench with p2 clashes first; without b, c (11:00) clashes with a.
      const ops = [
        makeOperation({ id: 'a', jobId: 'j1', on: ['b1', 'p1', 240], fixed: { benchId: 'b1', personId: 'p1', start: at(0, 8) } }),
        makeOperation({ id: 'c', jobId: 'j3', on: ['b1', 'p2', 60], fixed: { benchId: 'b1', personId: 'p2', start: at(0, 11) } }),
      ]
      expect(refusal(makeProblem({ benches, people, operations: ops }))).toMatchObject({ code: 'fixed-overlap', operationId: 'c' })
      const b = makeOperation({ id: 'b', jobId: 'j2', on: ['b2', 'p2', 30], fixed: { benchId: 'b2', personId: 'p2', start: at(0, 9) } })
      expect(refusal(makeProblem({ benches, people, operations: [...ops, b] }))).toMatchObject({ code: 'fixed-overlap', operationId: 'c' })
    })
    it("when pins touch, or one works through the other's lunch, then the input passes and the plan keeps both", () => {
      // Touching: a 09:00–11:00, b from 11:00. Lunch: p1 stops 12:00–12:30, so a pin from 11:30 for 60 min works 11:30–12:00 and
      // 12:30–13:00; b2 (no lunch) may be used 12:00–12:30 by p2 meanwhile.
      const lunch = [{ start: at(0, 8), end: at(0, 12) }, { start: at(0, 12, 30), end: at(0, 16) }, ...weekdays().slice(1)]
      const p = makeProblem({
        benches,
        people: [makePerson({ id: 'p1', name: 'Ines', available: lunch }), people[1]!],
        operations: [
          makeOperation({ id: 'a', jobId: 'j1', on: ['b1', 'p1', 120], fixed: { benchId: 'b1', personId: 'p1', start: at(0, 9) } }),
          makeOperation({ id: 'b', jobId: 'j2', on: ['b1', 'p2', 60], fixed: { benchId: 'b1', personId: 'p2', start: at(0, 11) } }),
          makeOperation({ id: 'c', jobId: 'j3', on: ['b2', 'p1', 60], fixed: { benchId: 'b2', personId: 'p1', start: at(0, 11, 30) } }),
          makeOperation({ id: 'd', jobId: 'j4', on: ['b2', 'p2', 30], fixed: { benchId: 'b2', personId: 'p2', start: at(0, 12) } }),
        ],
      })
      expect(() => checkProblem(p)).not.toThrow()
      const plan = solve(p, { seed: 1, timeLimitMs: 50 })
      expect(plan.score.violations).toEqual([])
      expect(plan.operations.find((o) => o.operationId === 'c')!.segments).toEqual([
        { start: at(0, 11, 30), end: at(0, 12) },
        { start: at(0, 12, 30), end: at(0, 13) },
      ])
    })
  })
})
