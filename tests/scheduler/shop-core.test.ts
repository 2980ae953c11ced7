// The search cores time a move only where it can change something. The makespan core is checked after every move against
// longest paths found another way (relaxing every arc until nothing changes, Bellman–Ford on an acyclic graph), on random and
// published shops; the due-date and machine-and-worker core's one-pass timing of a candidate against Kahn's order.
import { describe, it, expect } from 'vitest'
import { readFileSync } from 'node:fs'
import { solveShop, type ShopInstance } from '../../server/scheduler/shop-core.ts'
import { solvePairShop, type PairShop } from '../../server/scheduler/pair-core.ts'
import { parseShopFile, type ShopFile } from '../../server/scheduler/formats.ts'
import { createRng } from '../../server/scheduler/random.ts'
import { kitPath, requireKit } from '../setup/kit.ts'

const haveKit = requireKit('makespan core kit shops', ['jssp/ft10.jss', 'jssp/ta01.jss', 'fjsp/mk01.fjs', 'fjsp/mk06.fjs'])

function toInstance(file: ShopFile): ShopInstance {
  const jobPred: number[] = [],
    jobSucc: number[] = [],
    optStart: number[] = [0],
    optMachine: number[] = [],
    optDur: number[] = []
  for (const job of file.jobs) {
    job.forEach((options, k) => {
      const i = jobPred.length
      jobPred.push(k > 0 ? i - 1 : -1)
      jobSucc.push(k < job.length - 1 ? i + 1 : -1)
      for (const o of options) {
        optMachine.push(o.machine)
        optDur.push(o.duration)
      }
      optStart.push(optMachine.length)
    })
  }
  return {
    n: jobPred.length,
    m: file.machines,
    jobs: file.jobs.length,
    jobPred: Int32Array.from(jobPred),
    jobSucc: Int32Array.from(jobSucc),
    optStart: Int32Array.from(optStart),
    optMachine: Int32Array.from(optMachine),
    optDur: Int32Array.from(optDur),
  }
}

/** A random shop: each job visits `stages` machines in random order; with `choice`, a step may also go on another machine. */
function randomShop(seed: number, jobs: number, machines: number, choice: boolean): ShopFile {
  const rng = createRng(seed)
  const list: ShopFile['jobs'] = []
  for (let j = 0; j < jobs; j++) {
    const order = Array.from({ length: machines }, (_, k) => k)
    for (let k = machines - 1; k > 0; k--) {
      const x = rng.int(k + 1)
      ;[order[k], order[x]] = [order[x]!, order[k]!]
    }
    list.push(
      order.map((mach) => {
        const options = [{ machine: mach, duration: 1 + rng.int(40) }]
        if (choice && rng.next() < 0.5) options.push({ machine: (mach + 1 + rng.int(machines - 1)) % machines, duration: 1 + rng.int(40) })
        return options
      }),
    )
  }
  return { kind: choice ? 'fjsp' : 'jssp', jobs: list, machines, machineBase: 0 }
}

const run = (inst: ShopInstance, iterations: number) =>
  solveShop(inst, { seed: 7, deadline: Infinity, clock: () => 0, maxIterations: iterations, verifyIncremental: true })

describe('makespan core: partial updates after a move', () => {
  it('when random job shops are searched, then after every move the heads, tails and makespan equal the longest paths found by relaxation', () => {
    for (let seed = 1; seed <= 6; seed++) {
      const r = run(toInstance(randomShop(seed, 8 + seed, 5, false)), 3000)
      expect(r.iterations).toBeGreaterThan(0)
    }
  })
  it('when random shops with machine choices are searched, then every move (reassignments too) matches', () => {
    for (let seed = 1; seed <= 6; seed++) {
      const r = run(toInstance(randomShop(100 + seed, 10, 4, true)), 3000)
      expect(r.iterations).toBeGreaterThan(0)
    }
  })
  it.skipIf(!haveKit)('when published shops are searched (Fisher & Thompson ft10, Taillard ta01, Brandimarte mk01 and mk06), then every move matches', () => {
    for (const f of ['jssp/ft10.jss', 'jssp/ta01.jss', 'fjsp/mk01.fjs', 'fjsp/mk06.fjs']) {
      const r = run(toInstance(parseShopFile(f, readFileSync(kitPath(f), 'utf8'))), 4000)
      expect(r.iterations, f).toBeGreaterThan(0)
    }
  })
})

/** A random shop for the due-date and machine-and-worker core: chains of steps, each with (machine, worker, minutes) options. */
function randomPairShop(seed: number, jobs: number, machines: number, workers: number, lags: boolean): PairShop {
  const rng = createRng(seed)
  const jobOf: number[] = [],
    jobPred: number[] = [],
    jobSucc: number[] = [],
    optStart: number[] = [0],
    optMachine: number[] = [],
    optWorker: number[] = [],
    optDur: number[] = [],
    due: number[] = [],
    weight: number[] = [],
    lag: number[] = []
  for (let j = 0; j < jobs; j++) {
    const steps = 2 + rng.int(machines)
    let total = 0
    for (let k = 0; k < steps; k++) {
      const i = jobOf.length
      jobOf.push(j)
      jobPred.push(k > 0 ? i - 1 : -1)
      jobSucc.push(k < steps - 1 ? i + 1 : -1)
      lag.push(lags ? rng.int(5) : 0)
      const choices = workers > 0 ? 1 + rng.int(3) : 1
      for (let c = 0; c < choices; c++) {
        const d = 1 + rng.int(30)
        total += d / choices
        optMachine.push(rng.int(machines))
        optWorker.push(workers > 0 ? rng.int(workers) : -1)
        optDur.push(d)
      }
      optStart.push(optMachine.length)
    }
    due.push(Math.floor(total * 1.3))
    weight.push(1 + rng.int(4))
  }
  const n = jobOf.length
  return {
    n,
    machines,
    workers,
    jobs,
    jobOf: Int32Array.from(jobOf),
    jobPred: Int32Array.from(jobPred),
    jobSucc: Int32Array.from(jobSucc),
    optStart: Int32Array.from(optStart),
    optMachine: Int32Array.from(optMachine),
    optWorker: Int32Array.from(optWorker),
    optDur: Int32Array.from(optDur),
    release: new Int32Array(n),
    due: Float64Array.from(due),
    weight: Float64Array.from(weight),
    lag: Int32Array.from(lag),
  }
}

describe('due-date and machine-and-worker core: candidates timed in the current order', () => {
  it('when a move leaves the order valid and is timed in one pass, then every step ends where Kahn’s order puts it', () => {
    for (let seed = 1; seed <= 8; seed++) {
      for (const [machines, workers] of [
        [5, 0],
        [4, 3],
      ] as const) {
        const shop = randomPairShop(seed, 8 + seed, machines, workers, seed % 2 === 0)
        for (const objective of ['weightedTardiness', 'makespan'] as const) {
          const r = solvePairShop(shop, { seed, objective, deadline: Infinity, clock: () => 0, maxIterations: 1500, verifyOrder: true })
          expect(r.evaluations).toBeGreaterThan(0)
        }
      }
    }
  })
})
