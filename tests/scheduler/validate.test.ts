// The independent validator catches deliberately broken plans, one rule at a time.
import { describe, it, expect } from 'vitest'
import { solve, validatePlan, type Plan, type Problem } from '../../server/scheduler/index.ts'
import { at, makeBench, makeJob, makeOperation, makePerson, makeProblem, weekdays } from './builders.ts'

const problem: Problem = makeProblem({
  benches: [makeBench({ id: 'b1' }), makeBench({ id: 'b2' })],
  people: [makePerson({ id: 'p1' }), makePerson({ id: 'p2' })],
  workshopDays: weekdays(),
  jobs: [makeJob({ id: 'j1', release: at(0, 9), due: at(0, 12) }), makeJob({ id: 'j2' })],
  operations: [
    makeOperation({ id: 'a', jobId: 'j1', on: ['b1', 'p1', 60], waitAfter: 15 }),
    makeOperation({ id: 'b', jobId: 'j1', predecessors: ['a'], on: ['b1', 'p1', 60] }),
    makeOperation({ id: 'c', jobId: 'j2', options: [{ benchId: 'b2', personId: 'p2', minutes: 300 }] }),
    makeOperation({ id: 'cast', jobId: 'j2', predecessors: ['c'], outsideWorkingDays: 1 }),
    makeOperation({ id: 'pin', jobId: 'j2', on: ['b2', 'p2', 30], fixed: { benchId: 'b2', personId: 'p2', start: at(0, 8) } }),
    makeOperation({ id: 'old', jobId: 'j2', on: ['b2', 'p2', 30], done: true }),
  ],
})
const good = (): Plan => solve(problem, { seed: 1, timeLimitMs: 100, maxIterations: 50 }, { clock: () => performance.now() })
const broken = (edit: (p: Plan) => void): string[] => {
  const p = structuredClone(good())
  edit(p)
  return validatePlan(problem, p).map((v) => v.rule)
}
const op = (p: Plan, id: string) => p.operations.find((o) => o.operationId === id)!
const shift = (p: Plan, id: string, by: number): void => {
  const o = op(p, id)
  o.start += by
  o.end += by
  o.segments = o.segments.map((s) => ({ start: s.start + by, end: s.end + by }))
}

describe('validatePlan', () => {
  it('when the plan comes from the engine, then it has no violations', () => {
    expect(validatePlan(problem, good())).toEqual([])
  })
  it('when an operation is missing, then "every operation planned once" is reported', () => {
    expect(
      broken((p) => {
        p.operations = p.operations.filter((o) => o.operationId !== 'b')
      }),
    ).toContain('every operation planned once')
  })
  it('when a done operation is planned again, then it is reported', () => {
    expect(
      broken((p) => {
        p.operations.push({ ...op(p, 'b'), operationId: 'old' })
      }),
    ).toContain('done work is not planned again')
  })
  it('when an operation uses a bench none of its options names, then "bench capability" is reported', () => {
    expect(
      broken((p) => {
        op(p, 'a').benchId = 'b2'
      }),
    ).toContain('bench capability')
  })
  it('when an operation needs a person none of its options names, then "skill" is reported', () => {
    expect(
      broken((p) => {
        op(p, 'a').personId = 'p2'
      }),
    ).toContain('skill')
  })
  it('when bench and person are each allowed but not as a pair, then "allowed bench and person" is reported, and neither capability nor skill', () => {
    // Hand-built: step x may run on (b1, p1) or (b2, p2); the plan puts it on b1 with p2.
    const pairs: Problem = makeProblem({
      benches: [makeBench({ id: 'b1' }), makeBench({ id: 'b2' })],
      people: [makePerson({ id: 'p1' }), makePerson({ id: 'p2' })],
      workshopDays: weekdays(),
      jobs: [makeJob({ id: 'j' })],
      operations: [
        makeOperation({
          id: 'x',
          jobId: 'j',
          options: [
            { benchId: 'b1', personId: 'p1', minutes: 60 },
            { benchId: 'b2', personId: 'p2', minutes: 60 },
          ],
        }),
      ],
    })
    const plan = solve(pairs, { seed: 1, timeLimitMs: 100, maxIterations: 10 }, { clock: () => performance.now() })
    const x = plan.operations[0]!
    x.benchId = 'b1'
    x.personId = 'p2'
    const found = validatePlan(pairs, plan)
    expect(found.map((v) => v.rule)).toEqual(['allowed bench and person'])
    expect(found[0]).toMatchObject({ severity: 'hard', operationId: 'x', jobId: 'j' })
  })
  it('when the worked minutes do not add up, then "work adds up" is reported', () => {
    expect(
      broken((p) => {
        const o = op(p, 'a')
        o.end -= 10
        o.segments[o.segments.length - 1]!.end -= 10
      }),
    ).toContain('work adds up')
  })
  it('when work is planned at night, then the bench and personal working-time rules are reported', () => {
    const rules = broken((p) => shift(p, 'b', 10 * 60))
    expect(rules).toContain('within bench working time')
    expect(rules).toContain('within personal working time')
  })
  it('when work pauses although bench and person are free, then "work resumes only at next working time" is reported', () => {
    expect(
      broken((p) => {
        const o = op(p, 'c')
        const s = o.segments[0]!
        o.segments = [{ start: s.start, end: s.start + 60 }, { start: s.start + 120, end: s.end + 60 }, ...o.segments.slice(1)]
      }),
    ).toContain('work resumes only at next working time')
  })
  it('when two operations share a bench at the same time, then double booking is reported for bench and person', () => {
    const rules = broken((p) => {
      const a = op(p, 'a'),
        b = op(p, 'b')
      b.start = a.start
      b.end = a.end
      b.segments = a.segments.map((s) => ({ ...s }))
    })
    expect(rules).toContain('bench double booking')
    expect(rules).toContain('person double booking')
  })
  it('when a successor starts during the pickle wait, then "routing order" is reported', () => {
    expect(broken((p) => shift(p, 'b', -10))).toContain('routing order')
  })
  it('when work starts before its job is released, then "not before release" is reported', () => {
    expect(broken((p) => shift(p, 'a', -60))).toContain('not before release')
  })
  it('when work starts before now, then "not before now" is reported', () => {
    const later = { ...problem, now: at(0, 9) }
    const p = solve(later, { seed: 1, timeLimitMs: 100, maxIterations: 10 }, { clock: () => performance.now() })
    shift(p, 'c', -60)
    expect(validatePlan(later, p).map((v) => v.rule)).toContain('not before now')
  })
  it('when pinned work is moved, then "pinned work stays put" is reported', () => {
    expect(broken((p) => shift(p, 'pin', 30))).toContain('pinned work stays put')
  })
  it('when outside work comes back too early, then "outside work takes its working days" is reported', () => {
    expect(
      broken((p) => {
        const o = op(p, 'cast')
        o.end -= 60
        o.segments = [{ start: o.start, end: o.end }]
      }),
    ).toContain('outside work')
  })
  it('when work ends after the horizon, then "within the horizon" is reported', () => {
    expect(broken((p) => shift(p, 'cast', 30 * 1440))).toContain('within the horizon')
  })
  it('when the job summary is wrong, then "job summary matches" is reported', () => {
    expect(
      broken((p) => {
        p.jobs[0]!.completion -= 5
      }),
    ).toContain('job summary matches')
  })
})
