// The engine in a worker thread: a valid plan comes back, abort returns the best so far, bad input rejects; a worker that
// answered is kept for the next run, and a warmed-up one is taken first.
import { afterAll, describe, it, expect } from 'vitest'
import { closePlanner, plannerWorkers, prewarmPlanner, runInWorker } from '../../server/scheduler/run-in-worker.ts'
import { generateWorkshop } from '../../server/scheduler/generate.ts'
import { SchedulingInputError, solve, validatePlan } from '../../server/scheduler/index.ts'
import { makeOperation, makeProblem } from './builders.ts'

describe('runInWorker', () => {
  afterAll(closePlanner)

  it('when a workshop is planned in a worker, then a valid plan comes back with progress on the way, each report naming its stage', async () => {
    const problem = generateWorkshop({ seed: 5, jobs: 15 })
    const stages: (string | undefined)[] = []
    const plan = await runInWorker(
      problem,
      { seed: 1, timeLimitMs: 300 },
      {
        onProgress: (p) => {
          stages.push(p.stage)
        },
      },
    )
    expect(validatePlan(problem, plan)).toEqual([])
    expect(stages.length).toBeGreaterThan(0)
    // The first report is the first plan; every report names one of the search's stages (see SolveProgress in model.ts).
    expect(stages[0]).toBe('start')
    for (const s of stages) expect(['start', 'sketch', 'graph', 'decoder']).toContain(s)
  })

  it('when the run is aborted, then it stops early and resolves with the best plan so far', async () => {
    const problem = generateWorkshop({ seed: 6, jobs: 20 })
    const ac = new AbortController()
    const t0 = performance.now()
    const running = runInWorker(problem, { seed: 1, timeLimitMs: 60_000 }, { signal: ac.signal, onProgress: () => ac.abort() })
    const plan = await running
    expect(performance.now() - t0).toBeLessThan(20_000)
    expect(validatePlan(problem, plan)).toEqual([])
  })

  it('when the signal is already aborted, then it rejects with an AbortError', async () => {
    const ac = new AbortController()
    ac.abort()
    await expect(runInWorker(generateWorkshop({ seed: 1, jobs: 2 }), { seed: 1, timeLimitMs: 100 }, { signal: ac.signal })).rejects.toMatchObject({
      name: 'AbortError',
    })
  })

  it('when the input is bad, then the promise rejects with a SchedulingInputError', async () => {
    const problem = makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', options: [] })] })
    const err = await runInWorker(problem, { seed: 1, timeLimitMs: 100 }).catch((e: unknown) => e)
    expect(err).toBeInstanceOf(SchedulingInputError)
    expect(err).toMatchObject({ code: 'no-option', operationId: 'a' })
  })

  it('when the worker crashes, then the promise rejects', async () => {
    const problem = generateWorkshop({ seed: 1, jobs: 2 })
    // A problem that cannot be cloned into the worker's shape breaks the solve inside the worker.
    const broken = { ...problem, operations: null } as unknown as typeof problem
    await expect(runInWorker(broken, { seed: 1, timeLimitMs: 100 })).rejects.toBeInstanceOf(Error)
  })

  it('when runs follow each other, then the worker the first left idle answers the next (no new thread), with the same plan as a fresh one', async () => {
    await closePlanner()
    const problem = generateWorkshop({ seed: 8, jobs: 12 })
    // No search (the first plan only), so the plan depends on the problem and seed alone: the engine run here in this thread is
    // the reference the workers' answers must equal. (With a search, which plans get decoded depends on the clock.)
    const options = { seed: 3, timeLimitMs: 10_000, maxIterations: 0 }
    const here = solve(problem, options)
    const before = plannerWorkers()
    const first = await runInWorker(problem, options)
    const afterFirst = plannerWorkers()
    expect(afterFirst.spawned - before.spawned).toBe(1)
    expect(afterFirst.idle).toBe(1)
    const second = await runInWorker(problem, options)
    const afterSecond = plannerWorkers()
    expect(afterSecond.spawned).toBe(afterFirst.spawned)
    expect(afterSecond.reused - afterFirst.reused).toBe(1)
    expect(first.operations).toEqual(here.operations)
    expect(second.operations).toEqual(here.operations)
    // A run refused for bad input is an answer too: the worker stays for the next run.
    const bad = makeProblem({ operations: [makeOperation({ id: 'a', jobId: 'j', options: [] })] })
    await expect(runInWorker(bad, options)).rejects.toBeInstanceOf(SchedulingInputError)
    expect(plannerWorkers()).toMatchObject({ spawned: afterFirst.spawned, idle: 1 })
  })

  it('when the planner is warmed up, then one worker waits idle and the next run takes it instead of starting a thread', async () => {
    await closePlanner()
    prewarmPlanner()
    prewarmPlanner() // a second call while one is warming starts no other
    const before = plannerWorkers()
    await expect.poll(() => plannerWorkers().idle, { timeout: 30_000, interval: 50 }).toBe(1)
    expect(plannerWorkers().spawned).toBe(before.spawned)
    const problem = generateWorkshop({ seed: 9, jobs: 10 })
    const plan = await runInWorker(problem, { seed: 1, timeLimitMs: 200 })
    expect(validatePlan(problem, plan)).toEqual([])
    expect(plannerWorkers()).toMatchObject({ spawned: before.spawned, reused: before.reused + 1, idle: 1 })
    // Closed (as the server does on shutdown), nothing waits; the next run starts a thread of its own.
    await closePlanner()
    expect(plannerWorkers().idle).toBe(0)
    await runInWorker(problem, { seed: 1, timeLimitMs: 100 })
    expect(plannerWorkers().spawned).toBe(before.spawned + 1)
  })

  it('when the planner is closed while a run is under way, then the run still answers and its worker is ended, not kept idle', async () => {
    await closePlanner()
    const problem = generateWorkshop({ seed: 10, jobs: 10 })
    const running = runInWorker(problem, { seed: 1, timeLimitMs: 400 })
    await closePlanner()
    const plan = await running
    expect(validatePlan(problem, plan)).toEqual([])
    expect(plannerWorkers().idle).toBe(0)
  })
})
