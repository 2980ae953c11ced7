// CLI: solve a benchmark or a workshop problem and print one JSON object on stdout, nothing else.
// usage: npm run -s solve -- [--time-limit SECONDS] [--seed N] FILE
//   .jss / .fjs  job shop / flexible job shop, makespan:         {"makespan","operations":[{"job","op","machine","start","end"}]}
//   .twt         job shop with due dates and weights, TWT:       {"objective","operations":[{"job","op","machine","start","end"}]}
//   .fjw         flexible job shop with workers, makespan:       {"makespan","operations":[{"job","op","machine","worker","start","end"}]}
//   .json        the engine's own Problem (server/scheduler/model.ts): the Plan
import { readFileSync } from 'node:fs'
import { basename } from 'node:path'
import { parseFjw, parseShopFile, parseTwt, shopToProblem } from '../server/scheduler/formats.ts'
import { solve } from '../server/scheduler/index.ts'
import type { Objective, Plan, Problem } from '../server/scheduler/model.ts'

function main(): void {
  const args = process.argv.slice(2)
  let timeLimit = 10,
    seed = 1,
    file: string | undefined
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!
    if (a === '--time-limit') timeLimit = Number(args[++i])
    else if (a === '--seed') seed = Number(args[++i])
    else if (a === '--') continue
    else file = a
  }
  if (!file || !Number.isFinite(timeLimit) || !Number.isFinite(seed)) {
    process.stderr.write('usage: npm run -s solve -- [--time-limit SECONDS] [--seed N] FILE(.jss|.fjs|.twt|.fjw|.json)\n')
    process.exit(2)
  }
  const text = readFileSync(file, 'utf8')
  const name = basename(file)
  let problem: Problem, objective: Objective[] | undefined
  if (name.endsWith('.json')) problem = JSON.parse(text) as Problem
  else if (name.endsWith('.twt')) {
    problem = parseTwt(text)
    objective = ['weightedTardiness', 'makespan']
  } else if (name.endsWith('.fjw')) {
    problem = parseFjw(text)
    objective = ['makespan']
  } else {
    problem = shopToProblem(parseShopFile(name, text))
    objective = ['makespan']
  }
  const plan = solve(problem, { seed, timeLimitMs: timeLimit * 1000, ...(objective ? { objective } : {}) }, { clock: () => performance.now() })
  if (!plan.score.feasible) process.stderr.write(`warning: ${plan.score.violations.map((v) => v.message).join('; ')}\n`)
  if (name.endsWith('.json')) {
    process.stdout.write(JSON.stringify(plan) + '\n')
    return
  }
  process.stdout.write(JSON.stringify(benchmarkSchedule(plan, name)) + '\n')
}

/** The benchmark checkers' schedule shape, job and op from the operation id, machine and worker from the resource ids. */
function benchmarkSchedule(plan: Plan, name: string) {
  const withWorker = name.endsWith('.fjw')
  const operations = plan.operations.map((p) => {
    const m = /^j(\d+)o(\d+)$/.exec(p.operationId)!
    return {
      job: Number(m[1]),
      op: Number(m[2]),
      machine: Number(p.benchId!.slice(1)),
      ...(withWorker ? { worker: Number(p.personId!.slice(1)) } : {}),
      start: p.start,
      end: p.end,
    }
  })
  operations.sort((a, b) => a.job - b.job || a.op - b.op)
  if (name.endsWith('.twt')) return { objective: plan.score.weightedTardiness, operations }
  return { makespan: plan.score.makespan, operations }
}

try {
  main()
} catch (e) {
  // Bad input (an unreadable file, a step of 0 minutes, a weight below 0): one line on stderr, nothing on stdout, exit 1.
  process.stderr.write(`solve: ${e instanceof Error ? e.message : String(e)}\n`)
  process.exit(1)
}
