// Published benchmarks from the kit (MILLGRAIN_BENCH_DIR, default ../shared/bench) and tiny shops against the HiGHS MIP optimum.
import { describe, it, expect } from 'vitest'
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs'
import { spawnSync } from 'node:child_process'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { solve, validatePlan } from '../../server/scheduler/index.ts'
import { parseShopFile, shopToProblem, type ShopFile } from '../../server/scheduler/formats.ts'
import { solveMip } from '../../server/scheduler/reference/mip.ts'
import { createRng } from '../../server/scheduler/random.ts'
import { benchDir, requireKit } from '../setup/kit.ts'

const haveKit = requireKit('kit benchmarks', ['bounds.json', '../tools/check-schedule.mjs'])
const checker = join(benchDir, '../tools/check-schedule.mjs')

interface Bound {
  name: string
  file: string
  lower_bound: number
  upper_bound: number
}
const bounds: Bound[] = haveKit ? JSON.parse(readFileSync(join(benchDir, 'bounds.json'), 'utf8')) : []
if (haveKit)
  requireKit(
    'kit benchmarks',
    bounds.map((b) => b.file),
  )
const load = (b: Bound): ShopFile => parseShopFile(b.file, readFileSync(join(benchDir, b.file), 'utf8'))
const clock = () => performance.now()

/** Solves a kit instance for makespan until `target` is reached or `limitMs` runs out; the plan must be valid. */
function solveUntil(name: string, target: number, limitMs: number) {
  const bound = bounds.find((b) => b.name === name)
  expect(bound, `${name} in bounds.json`).toBeDefined()
  const problem = shopToProblem(load(bound!))
  let best = Infinity
  const plan = solve(
    problem,
    { seed: 1, timeLimitMs: limitMs, objective: ['makespan'] },
    {
      clock,
      onProgress: (p) => {
        best = Math.min(best, p.best.makespan)
      },
      shouldStop: () => best <= target,
    },
  )
  expect(validatePlan(problem, plan), name).toEqual([])
  return { plan, bound: bound! }
}

describe.skipIf(!haveKit)('kit benchmarks (skipped with a message when the benchmark kit is absent outside CI)', () => {
  it('when ft06 is solved with a generous limit, then it reaches the optimum 55', () => {
    const problem = shopToProblem(load(bounds.find((b) => b.name === 'ft06')!))
    let best = Infinity
    const plan = solve(
      problem,
      { seed: 1, timeLimitMs: 10_000, objective: ['makespan'] },
      {
        clock,
        onProgress: (p) => {
          best = p.best.makespan
        },
        shouldStop: () => best <= 55,
      },
    )
    // Published optimum ft06 = 55 (Fisher & Thompson 1963; bounds.json)
    expect(plan.score.makespan).toBe(55)
    expect(validatePlan(problem, plan)).toEqual([])
  })

  it('when la01 is solved with a generous limit, then it reaches the proven optimum 666', () => {
    const { plan, bound } = solveUntil('la01', 666, 8_000)
    // Optimum la01 = 666: Lawrence (1984) instance, optimum as compiled in JSPLIB instances.json (bounds.json).
    expect(bound.upper_bound).toBe(666)
    expect(plan.score.makespan).toBe(666)
  })

  it('when ft10 is solved with a generous limit, then its makespan is within 3 % of the proven optimum 930', () => {
    const { plan, bound } = solveUntil('ft10', Math.floor(930 * 1.03), 10_000)
    // Optimum ft10 = 930: Fisher & Thompson (1963), proven by Carlier & Pinson (1989); JSPLIB instances.json (bounds.json).
    expect(bound.upper_bound).toBe(930)
    expect(plan.score.makespan).toBeGreaterThanOrEqual(930)
    expect(plan.score.makespan).toBeLessThanOrEqual(957)
  })

  it('when Brandimarte mk01 is solved with a generous limit, then its makespan is within 5 % of the best known 40', () => {
    const { plan, bound } = solveUntil('mk01', Math.floor(40 * 1.05), 8_000)
    // mk01 = 40: Brandimarte (1993) instance, bound from the SchedulingLab/fjsp-instances table (bounds.json, optimum 40).
    expect(bound.upper_bound).toBe(40)
    expect(plan.score.makespan).toBeGreaterThanOrEqual(40)
    expect(plan.score.makespan).toBeLessThanOrEqual(42)
  })

  it('when every kit instance is solved briefly, then each schedule passes both checkers and respects the published lower bound', () => {
    const dir = mkdtempSync(join(tmpdir(), 'millgrain-bench-'))
    for (const b of bounds) {
      const problem = shopToProblem(load(b))
      const plan = solve(problem, { seed: 1, timeLimitMs: 400, objective: ['makespan'] }, { clock })
      expect(validatePlan(problem, plan), b.name).toEqual([])
      // Lower bounds as published in bounds.json (compiled from JSPLIB / SchedulingLab / ScheduleOpt tables): never beaten by a valid schedule.
      expect(plan.score.makespan, b.name).toBeGreaterThanOrEqual(b.lower_bound)
      // The kit's independent checker (written apart from the engine) must accept every schedule.
      const operations = plan.operations.map((p) => {
        const m = /^j(\d+)o(\d+)$/.exec(p.operationId)!
        return { job: Number(m[1]), op: Number(m[2]), machine: Number(p.benchId!.slice(1)), start: p.start, end: p.end }
      })
      const file = join(dir, `${b.name}.json`)
      writeFileSync(file, JSON.stringify({ makespan: plan.score.makespan, operations }))
      const out = spawnSync(process.execPath, [checker, join(benchDir, b.file), file, String(b.upper_bound)], { encoding: 'utf8' })
      expect(out.stdout, b.name).toContain(` valid makespan=${plan.score.makespan}`)
      expect(out.status, `${b.name}: ${out.stdout}`).toBe(0)
    }
  })
})

/** A random job shop: each job visits every machine once in a random order. */
function randomJobShop(seed: number, jobs: number, machines: number): ShopFile {
  const rng = createRng(seed)
  return {
    kind: 'jssp',
    machines,
    machineBase: 0,
    jobs: Array.from({ length: jobs }, () => {
      const order = Array.from({ length: machines }, (_, k) => k)
      for (let k = order.length - 1; k > 0; k--) {
        const r = rng.int(k + 1)
        ;[order[k], order[r]] = [order[r]!, order[k]!]
      }
      return order.map((m) => [{ machine: m, duration: 1 + rng.int(9) }])
    }),
  }
}

describe('tiny shops against the MIP optimum', () => {
  const cases: [number, number, number][] = [
    [1, 3, 3],
    [2, 3, 3],
    [3, 4, 3],
    [4, 4, 3],
    [5, 3, 4],
  ]
  it.each(cases)('when random job shop #%i (%i jobs × %i machines) is solved, then the engine equals the proven optimum', async (seed, jobs, machines) => {
    const file = randomJobShop(seed, jobs, machines)
    const mip = await solveMip(file, 30)
    // Reference: optimum proven by the HiGHS MIP solver (npm `highs`) on the disjunctive model (Manne 1960)
    expect(mip.optimal).toBe(true)
    const problem = shopToProblem(file)
    const plan = solve(problem, { seed: 1, timeLimitMs: 300, objective: ['makespan'] }, { clock })
    expect(validatePlan(problem, plan)).toEqual([])
    expect(plan.score.makespan).toBe(mip.makespan)
  })

  it('when a tiny flexible shop is solved, then the engine equals the proven MIP optimum', async () => {
    const rng = createRng(9)
    const file: ShopFile = {
      kind: 'fjsp',
      machines: 3,
      machineBase: 0,
      jobs: Array.from({ length: 3 }, () =>
        Array.from({ length: 3 }, () =>
          [0, 1, 2]
            .filter(() => rng.next() < 0.7)
            .concat([rng.int(3)])
            .filter((m, i, a) => a.indexOf(m) === i)
            .map((m) => ({ machine: m, duration: 1 + rng.int(9) })),
        ),
      ),
    }
    const mip = await solveMip(file, 30)
    // Reference: optimum proven by the HiGHS MIP solver (npm `highs`) on the disjunctive model with assignment variables
    expect(mip.optimal).toBe(true)
    const problem = shopToProblem(file)
    const plan = solve(problem, { seed: 1, timeLimitMs: 300, objective: ['makespan'] }, { clock })
    expect(plan.score.makespan).toBe(mip.makespan)
  })
})
