// The makespan core updates heads and tails only where a move can change them. Checked after every move against longest
// paths found another way (relaxing every arc until nothing changes, Bellman–Ford on an acyclic graph), on random and
// published shops.
import { describe, it, expect } from 'vitest'
import { readFileSync } from 'node:fs'
import { solveShop, type ShopInstance } from '../../server/scheduler/shop-core.ts'
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
