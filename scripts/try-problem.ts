import { createDb } from '../server/db/client'
import { loadPlanningData } from '../server/planning/problem'
import { solve, validatePlan } from '../server/scheduler/index.ts'
const { db, pool } = createDb('postgres://postgres@127.0.0.1:54339/millgrain_template')
const t0 = Date.now()
const d = await loadPlanningData(db, 1, new Date())
console.log('load ms', Date.now() - t0, 'ops', d.problem.operations.length, 'jobs', d.problem.jobs.length, 'now', d.problem.now)
const plan = solve(d.problem, { seed: 1, timeLimitMs: 3000 })
console.log(plan.score, plan.stats, validatePlan(d.problem, plan).length)
console.log(plan.operations.slice(0, 5))
await pool.end()
