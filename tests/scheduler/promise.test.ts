// Delivery promises: the new job in the gaps of the fixed plan, and with a short re-plan.
import { describe, it, expect } from 'vitest'
import { promise, solve, validatePlan, type Operation } from '../../server/scheduler/index.ts'
import { generateWorkshop } from '../../server/scheduler/generate.ts'
import { at, makeJob, makeOperation, makeProblem } from './builders.ts'

describe('promise', () => {
  it('when the bench is free after the current work, then the new job fits right after it without moving anything', () => {
    const problem = makeProblem({ jobs: [makeJob({ id: 'j1', due: at(0, 12) })], operations: [makeOperation({ id: 'a', jobId: 'j1', on: ['b1', 'p1', 120] })] })
    const current = solve(problem, { seed: 1, timeLimitMs: 50 })
    const res = promise(
      problem,
      current,
      { job: makeJob({ id: 'new', due: at(2, 16) }), operations: [makeOperation({ id: 'n1', jobId: 'new', on: ['b1', 'p1', 60] })] },
      { seed: 1, timeLimitMs: 100 },
    )
    // Hand-worked: 'a' holds b1/p1 08:00–10:00 (120 min from the 08:00 opening), so the 60-min new step runs 10:00–11:00.
    expect(res.withPlanFixed).toMatchObject({ completion: at(0, 11), feasible: true })
    const fixedOf = (id: string) => res.withPlanFixed.operations.find((o) => o.operationId === id)
    expect(fixedOf('a')).toMatchObject({ benchId: 'b1', personId: 'p1', start: at(0, 8), end: at(0, 10) })
    expect(fixedOf('n1')).toMatchObject({ benchId: 'b1', personId: 'p1', start: at(0, 10), end: at(0, 11) })
    expect(res.withReplan.completion).toBeLessThanOrEqual(at(0, 11))
    expect(res.withReplan.plan.operations.find((o) => o.operationId === 'a')!.start).toBe(at(0, 8))
  })

  it('when an urgent new job is re-planned, then it can finish earlier than in the gaps of the fixed plan', () => {
    const problem = makeProblem({ jobs: [makeJob({ id: 'j1', due: at(4, 16) })], operations: [makeOperation({ id: 'a', jobId: 'j1', on: ['b1', 'p1', 240] })] })
    const current = solve(problem, { seed: 1, timeLimitMs: 50 })
    const res = promise(
      problem,
      current,
      { job: makeJob({ id: 'new', due: at(0, 10), weight: 5 }), operations: [makeOperation({ id: 'n1', jobId: 'new', on: ['b1', 'p1', 60] })] },
      { seed: 1, timeLimitMs: 100 },
    )
    expect(res.withPlanFixed.completion).toBe(at(0, 13))
    expect(res.withReplan.completion).toBe(at(0, 9))
    expect(
      validatePlan(
        {
          ...problem,
          jobs: [...problem.jobs, makeJob({ id: 'new', due: at(0, 10), weight: 5 })],
          operations: [...problem.operations, makeOperation({ id: 'n1', jobId: 'new', on: ['b1', 'p1', 60] })],
        },
        res.withReplan.plan,
      ),
    ).toEqual([])
  })

  it('when a workshop of 30 job bags gets an enquiry, then both promises come back quickly and current jobs keep their times in the fixed case', () => {
    const problem = generateWorkshop({ seed: 12, jobs: 31 })
    const lastJob = problem.jobs.pop()!
    const newOps: Operation[] = problem.operations.filter((o) => o.jobId === lastJob.id)
    problem.operations = problem.operations.filter((o) => o.jobId !== lastJob.id)
    const current = solve(problem, { seed: 1, timeLimitMs: 200 })
    const t0 = performance.now()
    const res = promise(problem, current, { job: lastJob, operations: newOps }, { seed: 1, timeLimitMs: 150 }, { clock: () => performance.now() })
    const ms = performance.now() - t0
    expect(res.withPlanFixed.feasible).toBe(true)
    expect(res.withPlanFixed.completion).toBeGreaterThan(problem.now)
    // Fixed case: every current step keeps its bench, person, start and end exactly as in the current plan.
    expect(current.operations.length).toBeGreaterThan(50)
    const fixed = new Map(res.withPlanFixed.operations.map((o) => [o.operationId, o]))
    for (const o of current.operations) {
      const f = fixed.get(o.operationId)
      expect(f, o.operationId).toBeDefined()
      expect({ benchId: f!.benchId, personId: f!.personId, start: f!.start, end: f!.end }, o.operationId).toEqual({
        benchId: o.benchId,
        personId: o.personId,
        start: o.start,
        end: o.end,
      })
    }
    // The new job's steps are all placed, and its completion is the end of the last of them.
    const placed = res.withPlanFixed.operations.filter((o) => o.jobId === lastJob.id)
    expect(placed.map((o) => o.operationId).sort()).toEqual(newOps.map((o) => o.id).sort())
    expect(res.withPlanFixed.completion).toBe(Math.max(...placed.map((o) => o.end)))
    expect(res.withReplan.plan.score.feasible).toBe(true)
    expect(ms).toBeLessThan(5_000) // generous: timing targets are measured by the bench script, not here
  })
})
