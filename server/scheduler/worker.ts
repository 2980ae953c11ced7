// Worker-thread entry: runs solve() off the main thread, reports progress, stops early when the shared stop flag is raised.
import { parentPort, workerData } from 'node:worker_threads'
import { solve } from './solve.ts'
import type { Problem, SolveOptions } from './model.ts'

/** Message from the worker to its owner. */
export type WorkerReply =
  | { type: 'progress'; iteration: number; best: import('./model.ts').Score; elapsedMs: number; stage?: import('./model.ts').SolveStage }
  | { type: 'done'; plan: import('./model.ts').Plan }
  | { type: 'error'; name: string; message: string; code?: string; jobId?: string; operationId?: string }

const { problem, options, stop } = workerData as { problem: Problem; options: SolveOptions; stop: SharedArrayBuffer }
const flag = new Int32Array(stop)
const post = (m: WorkerReply): void => parentPort!.postMessage(m)
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
