// `npm run benchmark:sweep [-- --count N] [--seed S]`: plans on workshops unlike the tuned ones, checked by the kit's independent
// checker and the engine's validator. Each case is a generated workshop of 2–200 job bags (due dates over one to eight weeks,
// work scaled 0.3–2.5×, with or without work under way) given waits after steps, finished first steps with their finish times,
// then solved once; its plan's steps are pinned at random and kept as the previous plan, sometimes a new order is added, and it
// is solved again with 0.2, 0.5 or 1 s and either stability choice. Prints one line a case and the count of invalid plans
// (exit 1 when any). Asserts nothing about quality.
import { mkdtempSync, writeFileSync } from 'node:fs'
import { spawnSync } from 'node:child_process'
import { tmpdir } from 'node:os'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { generateWorkshop } from '../server/scheduler/generate.ts'
import { checkProblem, solve, validatePlan, type Operation, type Problem } from '../server/scheduler/index.ts'
import { createRng } from '../server/scheduler/random.ts'

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(name)
  return i >= 0 ? Number(process.argv[i + 1]) : fallback
}
const COUNT = arg('--count', 60)
const rng = createRng(arg('--seed', 1))
const pick = <T>(xs: readonly T[]): T => xs[rng.int(xs.length)]!
const root = resolve(dirname(fileURLToPath(import.meta.url)), '..')
const checker = resolve(root, process.env.MILLGRAIN_BENCH_DIR ?? '../shared/bench', '../tools/check-workshop.mjs')
const dir = mkdtempSync(join(tmpdir(), 'millgrain-sweep-'))

let bad = 0
let done = 0
for (let i = 0; i < COUNT; i++) {
  const settings = {
    seed: 1000 + rng.int(100_000),
    jobs: pick([2, 5, 12, 30, 60, 120, 200]),
    dueWeeks: pick([1, 2, 4, 8]),
    withProgress: rng.next() < 0.5,
    workScale: pick([0.3, 1, 2.5]),
  }
  const p: Problem = generateWorkshop(settings)
  for (const o of p.operations) if (!o.fixed && !o.done && rng.next() < 0.15) o.waitAfter = (o.waitAfter ?? 0) + rng.int(900)
  for (const o of p.operations)
    if (!o.fixed && !o.done && o.predecessors.length === 0 && rng.next() < 0.1)
      Object.assign(o, { done: true, finishedAt: p.now - rng.int(600), waitAfter: rng.int(1500) })
  const budget = pick([200, 500, 1000])
  const first = solve(p, { seed: 1 + rng.int(9), timeLimitMs: budget })
  const q: Problem = structuredClone(p)
  q.previous = Object.fromEntries(first.operations.map((op) => [op.operationId, { benchId: op.benchId, personId: op.personId, start: op.start }]))
  const byId = new Map(q.operations.map((o) => [o.id, o]))
  for (const op of first.operations) {
    const o = byId.get(op.operationId)
    if (o && !o.fixed && rng.next() < 0.05) o.fixed = { benchId: op.benchId, personId: op.personId, start: op.start }
  }
  if (rng.next() < 0.5) {
    const j = pick(q.jobs)
    q.jobs.push({ ...j, id: `${j.id}-new`, name: `${j.name} (new)` })
    for (const o of q.operations.filter((x) => x.jobId === j.id)) {
      const copy: Operation = { ...structuredClone(o), id: `${o.id}-new`, jobId: `${j.id}-new`, predecessors: o.predecessors.map((x) => `${x}-new`) }
      delete copy.fixed
      delete copy.done
      delete copy.finishedAt
      q.operations.push(copy)
    }
  }
  try {
    checkProblem(q)
  } catch (e) {
    console.log(`${i} input refused before solving (${String(e).slice(0, 100)}): skipped`)
    continue
  }
  const stability = pick(['small-changes', 'best-dates'] as const)
  const plan = solve(q, { seed: 1 + rng.int(9), timeLimitMs: budget, stability })
  const hard = validatePlan(q, plan).filter((v) => v.severity === 'hard')
  writeFileSync(join(dir, `p${i}.json`), JSON.stringify(q))
  writeFileSync(join(dir, `plan${i}.json`), JSON.stringify(plan))
  const c = spawnSync(process.execPath, [checker, join(dir, `p${i}.json`), join(dir, `plan${i}.json`)], { encoding: 'utf8' })
  const ok = c.status === 0 && hard.length === 0
  done++
  if (!ok) bad++
  const verdict = ok
    ? 'valid'
    : `INVALID ${c.stdout.trim().split('\n').slice(0, 2).join(' | ')} ${hard
        .slice(0, 2)
        .map((v) => v.message)
        .join(' | ')}`
  console.log(
    `${i} ${settings.jobs} bags, due over ${settings.dueWeeks} wk, work ×${settings.workScale}, ${budget} ms, ${stability}: wt ${plan.score.weightedTardiness}, ${verdict}`,
  )
}
console.log(`${done} plans checked, ${bad} invalid (files in ${dir})`)
process.exit(bad > 0 ? 1 : 0)
