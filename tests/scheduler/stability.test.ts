// Stability: the published plan is the starting point; re-planning an unchanged workshop changes nothing, a new order moves
// nobody that does not have to move, and "best dates" may trade changes for an earlier finish.
import { describe, it, expect } from 'vitest'
import { solve, validatePlan, type Plan, type Problem } from '../../server/scheduler/index.ts'
import { generateWorkshop } from '../../server/scheduler/generate.ts'
import { at, makeBench, makeJob, makeOperation, makePerson, makeProblem } from './builders.ts'
import { createRng } from '../../server/scheduler/random.ts'

const clock = () => performance.now()
const asPrevious = (plan: Plan): Problem['previous'] =>
  Object.fromEntries(plan.operations.map((o) => [o.operationId, { benchId: o.benchId, personId: o.personId, start: o.start }]))
/** Operations whose bench, person or start differ between two plans (counted here, apart from the engine's score). */
function changes(a: Plan, b: Plan): number {
  const before = new Map(a.operations.map((o) => [o.operationId, o]))
  return b.operations.filter((o) => {
    const x = before.get(o.operationId)
    return x && (x.benchId !== o.benchId || x.personId !== o.personId || x.start !== o.start)
  }).length
}

describe('stability against the published plan', () => {
  const problem = generateWorkshop({ seed: 11, jobs: 40 })
  const first = solve(problem, { seed: 1, timeLimitMs: 30_000, maxIterations: 400 }, { clock })

  it('when an unchanged workshop is planned again, then nothing changes and the score is not worse', () => {
    const again: Problem = { ...problem, previous: asPrevious(first) }
    const plan = solve(again, { seed: 2, timeLimitMs: 30_000, maxIterations: 400 }, { clock })
    expect(validatePlan(again, plan)).toEqual([])
    expect(plan.score.weightedTardiness).toBeLessThanOrEqual(first.score.weightedTardiness)
    // A step moves only for less lateness: no change exactly when the lateness is the same (asserted both ways, never skipped).
    expect({ changed: changes(first, plan) > 0 }).toEqual({ changed: plan.score.weightedTardiness < first.score.weightedTardiness })
    expect(plan.stats.previous?.weightedTardiness).toBe(first.score.weightedTardiness)
  })

  it('when one order with a loose due date is added, then no planned step moves', () => {
    const job = { id: 'new', name: 'New ring', release: problem.now, due: problem.horizon - 1, weight: 1 }
    const bench = problem.benches.find((b) => problem.operations.some((o) => o.options.some((x) => x.benchId === b.id)))!
    const option = problem.operations.flatMap((o) => o.options).find((x) => x.benchId === bench.id)!
    const withOrder: Problem = {
      ...problem,
      previous: asPrevious(first),
      jobs: [...problem.jobs, job],
      operations: [
        ...problem.operations,
        { id: 'new-1', jobId: 'new', name: 'make', kind: 'assembly', predecessors: [], options: [{ ...option, minutes: 45 }] },
      ],
    }
    const plan = solve(withOrder, { seed: 3, timeLimitMs: 30_000, maxIterations: 400 }, { clock })
    expect(validatePlan(withOrder, plan)).toEqual([])
    expect(plan.score.weightedTardiness).toBeLessThanOrEqual(first.score.weightedTardiness)
    expect({ changed: changes(first, plan) > 0 }).toEqual({ changed: plan.score.weightedTardiness < first.score.weightedTardiness })
    expect(plan.operations.some((o) => o.operationId === 'new-1')).toBe(true)
  })

  // Expected moves worked out by hand: outside work is planned with no bench and no person, so it counts as moved exactly when
  // the previous plan gave it a bench or a person, whatever its options list.
  it('when a step that was planned on a bench now goes outside, then it counts as one move and the plan stays valid', () => {
    const problem = makeProblem({
      operations: [
        makeOperation({ id: 'cast', jobId: 'j1', outsideWorkingDays: 1 }),
        makeOperation({ id: 'clean', jobId: 'j1', predecessors: ['cast'], on: ['b1', 'p1', 30] }),
      ],
      previous: { cast: { benchId: 'b1', personId: 'p1', start: at(0, 8) }, clean: { benchId: 'b1', personId: 'p1', start: at(1, 16) } },
    })
    const plan = solve(problem, { seed: 1, timeLimitMs: 200 }, { clock })
    expect(plan.operations.find((o) => o.operationId === 'cast')).toMatchObject({ benchId: null, personId: null })
    expect(plan.score.moves).toBe(1)
    expect(validatePlan(problem, plan)).toEqual([])
  })

  // Hand-worked (Monday 08:00–16:00; two benches, each with its own person; every step 60 min on either pair). The published
  // plan had A b1 08–09, B b2 08–09, C b1 09–10, D b2 09–10, all on time; then A was moved by hand to b1 10–11, past its 09:00
  // due time. Kept as it is, A is late (C fills its hour: A 09–10, 60 min × weight 5). Dispatched by slack (A, C, B, D), A is on
  // time but C and D change bench. Putting A back alone is on time too and changes nothing else: the plan to expect.
  it('when a step was moved later by hand, then re-planning puts it back and changes nothing else that buys no lateness', () => {
    const both = (minutes: number) => [
      { benchId: 'b1', personId: 'p1', minutes },
      { benchId: 'b2', personId: 'p2', minutes },
    ]
    const problem = makeProblem({
      benches: [makeBench({ id: 'b1' }), makeBench({ id: 'b2' })],
      people: [makePerson({ id: 'p1' }), makePerson({ id: 'p2' })],
      jobs: [
        makeJob({ id: 'D', due: at(0, 13) }),
        makeJob({ id: 'C', due: at(0, 11) }),
        makeJob({ id: 'B', due: at(0, 12) }),
        makeJob({ id: 'A', due: at(0, 9), weight: 5 }),
      ],
      operations: ['D', 'C', 'B', 'A'].map((j) => makeOperation({ id: j, jobId: j, options: both(60) })),
      previous: {
        A: { benchId: 'b1', personId: 'p1', start: at(0, 10) },
        B: { benchId: 'b2', personId: 'p2', start: at(0, 8) },
        C: { benchId: 'b1', personId: 'p1', start: at(0, 9) },
        D: { benchId: 'b2', personId: 'p2', start: at(0, 9) },
      },
    })
    // The first plans only (no search), so what the result owes its few changes to is the walk back to the previous plan.
    const plan = solve(problem, { seed: 1, timeLimitMs: 10_000, maxIterations: 0, stability: 'small-changes' }, { clock })
    expect(plan.stats.previous?.weightedTardiness).toBe(60 * 5)
    const placed = Object.fromEntries(plan.operations.map((o) => [o.operationId, [o.benchId, o.start]]))
    expect(placed).toEqual({ A: ['b1', at(0, 8)], B: ['b2', at(0, 8)], C: ['b1', at(0, 9)], D: ['b2', at(0, 9)] })
    expect(plan.score).toMatchObject({ weightedTardiness: 0, moves: 0, shifted: 1 })
    expect(validatePlan(problem, plan)).toEqual([])
  })

  it('when a step was moved later by hand and pinned there, then the work after it on the bench keeps its times instead of moving up into the hole', () => {
    // Hand-worked: one bench and one person, 08:00–16:00. Published: X 08–09, Y 09–10, Z 10–11. The manager pins X at 13:00.
    // Y and Z could now start at 08:00 and 09:00, but that buys nothing (nothing is late either way, and the last step still
    // ends at 14:00 with X), so "keep changes small" leaves them at 09:00 and 10:00: no step moved, none shifted. (Packed as early
    // as they fit, as the walk back did before it could hold a step at its previous start, both shifted.)
    const problem = makeProblem({
      jobs: ['X', 'Y', 'Z'].map((id) => makeJob({ id, due: at(0, 16) })),
      operations: [
        makeOperation({ id: 'X', jobId: 'X', on: ['b1', 'p1', 60], fixed: { benchId: 'b1', personId: 'p1', start: at(0, 13) } }),
        makeOperation({ id: 'Y', jobId: 'Y', on: ['b1', 'p1', 60] }),
        makeOperation({ id: 'Z', jobId: 'Z', on: ['b1', 'p1', 60] }),
      ],
      previous: {
        X: { benchId: 'b1', personId: 'p1', start: at(0, 13) },
        Y: { benchId: 'b1', personId: 'p1', start: at(0, 9) },
        Z: { benchId: 'b1', personId: 'p1', start: at(0, 10) },
      },
    })
    const plan = solve(problem, { seed: 1, timeLimitMs: 10_000, maxIterations: 0, stability: 'small-changes' }, { clock })
    const placed = Object.fromEntries(plan.operations.map((o) => [o.operationId, [o.start, o.end]]))
    expect(placed).toEqual({ X: [at(0, 13), at(0, 14)], Y: [at(0, 9), at(0, 10)], Z: [at(0, 10), at(0, 11)] })
    expect(plan.score).toMatchObject({ weightedTardiness: 0, moves: 0, shifted: 0, makespan: at(0, 14) })
    expect(plan.operations.find((o) => o.operationId === 'Y')?.reason.kind).toBe('kept')
    expect(validatePlan(problem, plan)).toEqual([])
  })

  it('when outside work was planned outside before and lists an option without bench or person, then it has not moved', () => {
    const problem = makeProblem({
      operations: [makeOperation({ id: 'hallmark', jobId: 'j1', outsideWorkingDays: 2, options: [{ benchId: null, personId: null, minutes: 30 }] })],
      previous: { hallmark: { benchId: null, personId: null, start: at(0, 8) } },
    })
    const plan = solve(problem, { seed: 1, timeLimitMs: 200 }, { clock })
    expect(plan.score.moves).toBe(0)
    expect(validatePlan(problem, plan)).toEqual([])
  })
})

describe('stability on shops without calendars (planned by the machine-and-worker core)', () => {
  /** Six job bags of three steps, three benches and two people open all the time, each step on a few random pairs. */
  function openShop(seed: number): Problem {
    const rng = createRng(seed)
    const always = [{ start: 0, end: 100_000 }]
    return {
      origin: '2025-01-06',
      now: 0,
      horizon: 100_000,
      workshopDays: always,
      benches: [0, 1, 2].map((k) => ({ id: `m${k}`, name: `m${k}`, available: always })),
      people: [0, 1].map((k) => ({ id: `w${k}`, name: `w${k}`, available: always })),
      jobs: Array.from({ length: 6 }, (_, j) => ({ id: `j${j}`, name: `j${j}`, release: 0, due: 20 + rng.int(40), weight: 1 + rng.int(3) })),
      operations: Array.from({ length: 6 }, (_, j) =>
        [0, 1, 2].map((k) => {
          const options: { benchId: string; personId: string; minutes: number }[] = []
          for (let m = 0; m < 3; m++)
            for (let w = 0; w < 2; w++)
              if (rng.next() < 0.4 || (options.length === 0 && m === 2 && w === 1))
                options.push({ benchId: `m${m}`, personId: `w${w}`, minutes: 2 + rng.int(9) })
          return { id: `j${j}o${k}`, jobId: `j${j}`, name: `j${j}o${k}`, kind: 'x', predecessors: k ? [`j${j}o${k - 1}`] : [], options }
        }),
      ).flat(),
    }
  }
  it('when such a shop is planned again unchanged, then no step moves or shifts unless the lateness drops (50 shops)', () => {
    // The core times a step right after what precedes it in its sequences; a gap it leaves that a later step fits into would be
    // filled by the re-plan, shifting steps at the same lateness (found on 5 of 200 such shops before the plan was left-justified).
    const shifted: number[] = []
    for (let seed = 1; seed <= 50; seed++) {
      const problem = openShop(seed)
      const first = solve(problem, { seed: 1, timeLimitMs: 20_000, maxIterations: 200 }, { clock })
      const again: Problem = { ...problem, previous: asPrevious(first) }
      const plan = solve(again, { seed: 2, timeLimitMs: 20_000, maxIterations: 200, stability: 'small-changes' }, { clock })
      expect(validatePlan(again, plan)).toEqual([])
      expect(plan.score.weightedTardiness).toBeLessThanOrEqual(first.score.weightedTardiness)
      if (plan.score.weightedTardiness === first.score.weightedTardiness && changes(first, plan) > 0) shifted.push(seed)
    }
    expect(shifted).toEqual([])
  })
})
