// Worker-thread entry: solves each problem it is sent, one at a time, off the main thread; reports progress, stops early when
// the run's shared stop flag is raised, and then waits for the next. A worker kept between runs starts its next search with
// the engine already loaded and compiled by V8 (see run-in-worker.ts).
import { parentPort } from 'node:worker_threads'
import { solve } from './solve.ts'
import { warmUpEngine } from './warm.ts'
import type { Plan, Problem, Score, SolveOptions, SolveStage } from './model.ts'

/** Message to the worker: a run to solve, or a short solve of a small generated workshop that only warms the engine up. */
export type WorkerRequest = { type: 'solve'; problem: Problem; options: SolveOptions; stop: SharedArrayBuffer } | { type: 'warm' }

/** Message from the worker to its owner. */
export type WorkerReply =
  | { type: 'progress'; iteration: number; best: Score; elapsedMs: number; stage?: SolveStage }
  | { type: 'done'; plan: Plan }
  | { type: 'error'; name: string; message: string; code?: string; jobId?: string; operationId?: string }
  | { type: 'warmed' }

const post = (m: WorkerReply): void => parentPort!.postMessage(m)

function run(problem: Problem, options: SolveOptions, stop: SharedArrayBuffer): void {
  const flag = new Int32Array(stop)
  try {
    const plan = solve(problem, options, {
      clock: () => performance.now(),
      shouldStop: () => Atomics.load(flag, 0) !== 0,
      onProgress: (p) => post({ type: 'progress', iteration: p.iteration, best: p.best, elapsedMs: p.elapsedMs, ...(p.stage ? { stage: p.stage } : {}) }),
    })
    post({ type: 'done', plan })
  } catch (e) {
    const err = e as Error & { code?: string; jobId?: string; operationId?: string }
    post({
      type: 'error',
      name: err.name,
      message: err.message,
      ...(err.code ? { code: err.code } : {}),
      ...(err.jobId ? { jobId: err.jobId } : {}),
      ...(err.operationId ? { operationId: err.operationId } : {}),
    })
  }
}

parentPort!.on('message', (m: WorkerRequest) => {
  if (m.type === 'solve') run(m.problem, m.options, m.stop)
  else {
    warmUpEngine()
    post({ type: 'warmed' })
  }
})
