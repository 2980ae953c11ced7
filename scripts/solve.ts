// CLI: solve a job-shop (.jss) or flexible job-shop (.fjs) benchmark and print one JSON schedule on stdout.
// usage: npm run -s solve -- [--time-limit SECONDS] [--seed N] FILE
import { readFileSync } from 'node:fs'
import { basename } from 'node:path'
import { parseShopFile, shopToProblem } from '../server/scheduler/formats.ts'
import { solve } from '../server/scheduler/index.ts'

function main(): void {
  const args = process.argv.slice(2)
  let timeLimit = 10, seed = 1, file: string | undefined
  for (let i = 0; i < args.length; i++) {
    const a = args[i]!
    if (a === '--time-limit') timeLimit = Number(args[++i])
    else if (a === '--seed') seed = Number(args[++i])
    else if (a === '--') continue
    else file = a
  }
  if (!file || !Number.isFinite(timeLimit) || !Number.isFinite(seed)) {
    process.stderr.write('usage: npm run -s solve -- [--time-limit SECONDS] [--seed N] FILE(.jss|.fjs)\n')
    process.exit(2)
  }
  const shop = parseShopFile(basename(file), readFileSync(file, 'utf8'))
  const problem = shopToProblem(shop)
  const plan = solve(problem, { seed, timeLimitMs: timeLimit * 1000, objective: ['makespan'] }, { clock: () => performance.now() })
  if (!plan.score.feasible) process.stderr.write(`warning: ${plan.score.violations.join('; ')}\n`)
  const operations = plan.operations.map((p) => {
    const m = /^j(\d+)o(\d+)$/.exec(p.operationId)!
    return { job: Number(m[1]), op: Number(m[2]), machine: Number(p.benchId!.slice(1)), start: p.start, end: p.end }
  })
  operations.sort((a, b) => a.job - b.job || a.op - b.op)
  process.stdout.write(JSON.stringify({ makespan: plan.score.makespan, operations }) + '\n')
}

main()
