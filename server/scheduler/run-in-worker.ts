// Runs the engine in a worker thread (works under tsx and vitest): progress, abort with best-so-far, crashes as rejections.
import { Worker } from 'node:worker_threads'
import { createRequire } from 'node:module'
import { pathToFileURL } from 'node:url'
import { SchedulingInputError, type Plan, type Problem, type SolveOptions, type SolveProgress, type SchedulingInputErrorCode } from './model.ts'
import type { WorkerReply } from './worker.ts'

/** tsx's loader API as an absolute URL, so the worker finds it whatever the working directory. */
const tsxApi = (): string =>
  pathToFileURL(
    createRequire(import.meta.url)
      .resolve('tsx/esm/api')
      .replace(/\.cjs$/, '.mjs'),
  ).href

/** How long an aborted solve may take to hand back its best plan before the worker is terminated. */
const ABORT_GRACE_MS = 2000

/**
 * Solves in a worker thread. On abort (signal) the search stops at once and the promise resolves with the best plan found so
 * far; if the worker does not answer within 2 s it is terminated and the promise rejects with an AbortError (DOMException).
 * An abort before the first plan exists also ends that way. Input errors reject with SchedulingInputError; a crash of the
 * worker rejects with its error.
 */
export function runInWorker(
  problem: Problem,
  options: SolveOptions,
  opts: { onProgress?: (p: SolveProgress) => void; signal?: AbortSignal } = {},
): Promise<Plan> {
  return new Promise<Plan>((resolvePlan, reject) => {
    const abortError = (): DOMException => new DOMException('The planning run was aborted', 'AbortError')
    if (opts.signal?.aborted) {
      reject(abortError())
      return
    }
    const stop = new SharedArrayBuffer(4)
    const flag = new Int32Array(stop)
    const isTs = import.meta.url.endsWith('.ts')
    const entry = new URL(isTs ? './worker.ts' : './worker.js', import.meta.url)
    // Under tsx or vitest the worker file is TypeScript. On Node 20 `execArgv: ['--import', 'tsx']` does not reach a worker's
    // entry module, so a tiny JavaScript bootstrap registers tsx's loader inside the worker and then imports the entry.
    const worker = isTs
      ? new Worker(`import(${JSON.stringify(tsxApi())}).then((m) => { m.register(); return import(${JSON.stringify(entry.href)}) })`, {
          eval: true,
          workerData: { problem, options, stop },
        })
      : new Worker(entry, { workerData: { problem, options, stop } })
    let settled = false
    let grace: ReturnType<typeof setTimeout> | undefined
    const finish = (fn: () => void): void => {
      if (settled) return
      settled = true
      if (grace) clearTimeout(grace)
      opts.signal?.removeEventListener('abort', onAbort)
      void worker.terminate()
      fn()
    }
    const onAbort = (): void => {
      Atomics.store(flag, 0, 1)
      grace = setTimeout(() => finish(() => reject(abortError())), ABORT_GRACE_MS)
    }
    opts.signal?.addEventListener('abort', onAbort, { once: true })
    worker.on('message', (m: WorkerReply) => {
      if (m.type === 'progress') opts.onProgress?.({ iteration: m.iteration, best: m.best, elapsedMs: m.elapsedMs, ...(m.stage ? { stage: m.stage } : {}) })
      else if (m.type === 'done') finish(() => resolvePlan(m.plan))
      else
        finish(() =>
          reject(
            m.name === 'SchedulingInputError'
              ? new SchedulingInputError({
                  code: m.code as SchedulingInputErrorCode,
                  message: m.message,
                  ...(m.jobId ? { jobId: m.jobId } : {}),
                  ...(m.operationId ? { operationId: m.operationId } : {}),
                })
              : Object.assign(new Error(m.message), { name: m.name }),
          ),
        )
    })
    worker.on('error', (e) => finish(() => reject(e)))
    worker.on('exit', (code) => finish(() => reject(new Error(`planning worker exited with code ${code} before answering`))))
  })
}
