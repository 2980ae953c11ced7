// The engine in a worker thread: a valid plan comes back, abort returns the best so far, bad input rejects.
import { describe, it, expect } from 'vitest'
import { runInWorker } from '../../server/scheduler/run-in-worker.ts'
import { generateWorkshop } from '../../server/scheduler/generate.ts'
import { SchedulingInputError, validatePlan } from '../../server/scheduler/index.ts'
import { makeOperation, makeProblem } from './builders.ts'

describe('runInWorker', () => {
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
})
