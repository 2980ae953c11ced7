// Each search runs on a fresh copy of its code (server/scheduler/fresh-copy.ts). Checked here: under this test runner's module
// transform the copies are really used (the self-check against the search itself passed), a copy that cannot see a name it needs
// falls back to the function itself, and a search's plan on a published shop does not depend on how many searches ran before it
// in the process (the copies share no state). Hand-worked values are named beside each check.
import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { freshCopies } from '../../server/scheduler/fresh-copy.ts'
import { solvePairShop } from '../../server/scheduler/pair-core.ts'
import { solveShop } from '../../server/scheduler/shop-core.ts'
import { solve } from '../../server/scheduler/index.ts'
import { parseShopFile, parseTwt, shopToProblem } from '../../server/scheduler/formats.ts'
import { kitPath, requireKit } from '../setup/kit.ts'

const haveKit = requireKit('fresh copies of the searches', ['twt/la01-f13.twt', 'jssp/ft06.jss'])

describe('fresh copies of a function', () => {
  const outsideName = 40
  // Names a module constant, so a copy must be handed it.
  function addOutside(x: number): number {
    return x + outsideName
  }

  it('when every outside name is handed over, then calls run on copies and give what the function gives (2 + 40 = 42)', () => {
    const f = freshCopies(addOutside, { outsideName }, (copy) => copy(1) === 41)
    expect(f.copying()).toBeNull()
    expect(f(2)).toBe(42)
    expect(f.copying()).toBe(true)
  })

  it('when a name is missing, then the self-check fails and every call uses the function itself', () => {
    const f = freshCopies(addOutside, {}, (copy) => copy(1) === 41)
    expect(f(2)).toBe(42)
    expect(f.copying()).toBe(false)
  })

  it('when a name is missing only on a branch the self-check does not take, then that call is made with the function itself (−2 + 40 = 38), and so are later ones', () => {
    const onlyBelowZero = 40
    function branchy(x: number): number {
      return x < 0 ? x + onlyBelowZero : x
    }
    const f = freshCopies(branchy, {}, (copy) => copy(1) === 1)
    expect(f(5)).toBe(5)
    expect(f.copying()).toBe(true)
    expect(f(-2)).toBe(38)
    expect(f.copying()).toBe(false)
  })

  it('when the self-check answers false, then the copies are not used', () => {
    const f = freshCopies(addOutside, { outsideName: 1000 }, (copy) => copy(1) === 41)
    expect(f(2)).toBe(42)
    expect(f.copying()).toBe(false)
  })
})

describe.runIf(haveKit)('the searches on copies', () => {
  it('when a due-date shop and a job shop are solved, then both searches ran on copies', () => {
    const twt = parseTwt(readFileSync(kitPath('twt/la01-f13.twt'), 'utf8'))
    solve(twt, { seed: 1, timeLimitMs: 50, maxIterations: 100, objective: ['weightedTardiness', 'makespan'] })
    const ft06 = shopToProblem(parseShopFile('ft06.jss', readFileSync(kitPath('jssp/ft06.jss'), 'utf8')))
    solve(ft06, { seed: 1, timeLimitMs: 50, maxIterations: 100, objective: ['makespan'] })
    expect(solvePairShop.copying()).toBe(true)
    expect(solveShop.copying()).toBe(true)
  })

  it('when the same search is run again after others, then it gives the same plan (a fixed number of iterations, so no clock)', () => {
    const twt = parseTwt(readFileSync(kitPath('twt/la01-f13.twt'), 'utf8'))
    const run = () => solve(twt, { seed: 3, timeLimitMs: 1e9, maxIterations: 2000, objective: ['weightedTardiness', 'makespan'] })
    const first = run()
    for (let k = 0; k < 3; k++) solve(twt, { seed: 10 + k, timeLimitMs: 1e9, maxIterations: 300, objective: ['weightedTardiness', 'makespan'] })
    const again = run()
    expect(again.operations).toEqual(first.operations)
    // la01 at f = 1.3: best known total weighted tardiness 2299 (kit bounds.json); no plan can be below it.
    expect(again.score.weightedTardiness).toBeGreaterThanOrEqual(2299)
  })
})
