// Delivery promises for a prospective job bag: slotted into the gaps of the current plan, and with everything re-planned.
import type { Job, Operation, Plan, Problem, SolveHooks, SolveOptions } from './model.ts'
import { checkProblem } from './check.ts'
import { compile, decode, toPlan } from './decode.ts'
import { topologicalOrder } from './search.ts'
import { solve } from './solve.ts'

/** A job bag the customer is asking about, with its routing. */
export interface ProspectiveJob {
  job: Job
  operations: Operation[]
}

export interface PromiseResult {
  /** Current work does not move; the new job uses the gaps. feasible is false when it cannot fit before the horizon. operations: every step as placed. */
  withPlanFixed: { completion: number; feasible: boolean; operations: Plan['operations'] }
  /** Everything re-planned together (search budget: options.timeLimitMs, keep it short, e.g. 150 ms). */
  withReplan: { completion: number; plan: Plan }
}

/**
 * Earliest completion of a prospective job: first inserted into the current plan without moving anything (so no current job
 * gets later), then with a short re-plan of everything. Throws SchedulingInputError when the new job's data is bad.
 */
export function promise(problem: Problem, currentPlan: Plan, prospective: ProspectiveJob, options: SolveOptions, hooks: SolveHooks = {}): PromiseResult {
  const newIds = new Set(prospective.operations.map((o) => o.id))
  const planned = new Map(currentPlan.operations.map((p) => [p.operationId, p]))
  const pinnedOps: Operation[] = problem.operations.map((op) => {
    const p = planned.get(op.id)
    if (op.done || !p) return op
    return { ...op, fixed: { benchId: p.benchId, personId: p.personId, start: p.start, end: p.end } }
  })
  const fixedProblem: Problem = { ...problem, jobs: [...problem.jobs, prospective.job], operations: [...pinnedOps, ...prospective.operations] }
  checkProblem(fixedProblem)
  const c = compile(fixedProblem)
  // Only the new job's operations are free; a topological order of them is the whole priority.
  const key = new Float64Array(c.n)
  topologicalOrder(c).forEach((i, rank) => {
    key[i] = rank
  })
  const d = decode(c, key, new Int32Array(c.n).fill(-1))
  let completion = problem.now
  for (let i = 0; i < c.n; i++) if (newIds.has(c.ops[i]!.id)) completion = Math.max(completion, d.end[i]!)
  const withPlanFixed = {
    completion,
    feasible: d.overflow < 0 || !newIds.has(c.ops[d.overflow]!.id),
    operations: toPlan(c, d, { iterations: 0, elapsedMs: 0, firstPlanMs: 0 }).operations,
  }

  const previous: NonNullable<Problem['previous']> = { ...(problem.previous ?? {}) }
  for (const p of currentPlan.operations) previous[p.operationId] = { benchId: p.benchId, personId: p.personId, start: p.start }
  const replanProblem: Problem = {
    ...problem,
    previous,
    jobs: [...problem.jobs, prospective.job],
    operations: [...problem.operations, ...prospective.operations],
  }
  const plan = solve(replanProblem, options, hooks)
  const replanCompletion = plan.jobs.find((j) => j.jobId === prospective.job.id)?.completion ?? problem.now
  return { withPlanFixed, withReplan: { completion: replanCompletion, plan } }
}
