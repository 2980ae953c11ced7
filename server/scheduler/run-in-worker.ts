// Runs the engine in a worker thread (works under tsx and vitest): progress, abort with best-so-far, crashes as rejections. A
// worker that answered is kept for the next run, and the server warms one up when it starts.
import { Worker } from 'node:worker_threads'
import { createRequire } from 'node:module'
import { pathToFileURL } from 'node:url'
import { SchedulingInputError, type Plan, type Problem, type SolveOptions, type SolveProgress, type SchedulingInputErrorCode } from './model.ts'
import type { WorkerReply, WorkerRequest } from './worker.ts'

/** tsx's loader API as an absolute URL, so the worker finds it whatever the working directory. */
const tsxApi = (): string =>
  pathToFileURL(
    createRequire(import.meta.url)
      .resolve('tsx/esm/api')
      .replace(/\.cjs$/, '.mjs'),
  ).href

/** How long an aborted solve may take to hand back its best plan before the worker is terminated. */
const ABORT_GRACE_MS = 2000
/** Workers kept between runs (one: runs are minutes apart, and each holds its heap). */
const MAX_IDLE = 1

const idle: Worker[] = []
let warming: Worker | null = null
/** Counts closePlanner calls: a worker acquired before the last one is ended when its run answers, not kept. */
let epoch = 0
const counts = { spawned: 0, reused: 0 }

/** A new worker thread (under tsx or vitest the entry is TypeScript), dropped from the idle list whenever it ends. */
function spawn(): Worker {
  const isTs = import.meta.url.endsWith('.ts')
  const entry = new URL(isTs ? './worker.ts' : './worker.js', import.meta.url)
  // Under tsx or vitest the worker file is TypeScript. On Node 20 `execArgv: ['--import', 'tsx']` does not reach a worker's
  // entry module, so a tiny JavaScript bootstrap registers tsx's loader inside the worker and then imports the entry.
  const worker = isTs
    ? new Worker(`import(${JSON.stringify(tsxApi())}).then((m) => { m.register(); return import(${JSON.stringify(entry.href)}) })`, { eval: true })
    : new Worker(entry)
  counts.spawned++
  const drop = (): void => {
    const i = idle.indexOf(worker)
    if (i >= 0) idle.splice(i, 1)
    if (warming === worker) warming = null
  }
  worker.on('exit', drop)
  worker.on('error', drop)
  return worker
}

/** An idle worker (already warm) if there is one, else a new one. */
function acquire(): Worker {
  const w = idle.pop()
  if (!w) return spawn()
  counts.reused++
  w.ref()
  return w
}

/** A worker that answered its run goes back to the idle list (not keeping the process alive), or is ended when that is full. */
function release(w: Worker): void {
  if (idle.length < MAX_IDLE) {
    w.unref()
    idle.push(w)
  } else void w.terminate()
}

/**
 * Starts a worker and warms it up with a short solve of a small generated workshop, so the next run starts at once with the
 * engine compiled (a fresh worker spends about half a second loading before its first plan, and its first seconds of search
 * run slower). Does nothing when a warm worker is already idle or one is warming.
 */
export function prewarmPlanner(): void {
  if (idle.length > 0 || warming) return
  const w = spawn()
  warming = w
  w.unref()
  const onMessage = (m: WorkerReply): void => {
    if (m.type !== 'warmed') return
    w.off('message', onMessage)
    if (warming !== w) return // closed while warming
    warming = null
    release(w)
  }
  w.on('message', onMessage)
  w.postMessage({ type: 'warm' } satisfies WorkerRequest)
}

/** Ends the idle and warming workers (server shutdown, tests); a worker in a run is ended when the run answers. */
export async function closePlanner(): Promise<void> {
  epoch++
  const all = [...idle, ...(warming ? [warming] : [])]
  idle.length = 0
  warming = null
  await Promise.all(all.map((w) => w.terminate()))
}

/** Workers started and runs that found one idle, since the process began (tests, diagnostics). */
export function plannerWorkers(): { spawned: number; reused: number; idle: number } {
  return { ...counts, idle: idle.length }
}

/**
 * Solves in a worker thread, an idle one from an earlier run when there is one. On abort (signal) the search stops at once and
 * the promise resolves with the best plan found so far; if the worker does not answer within 2 s it is terminated and the
 * promise rejects with an AbortError (DOMException). An abort before the first plan exists also ends that way. Input errors
 * reject with SchedulingInputError; a crash of the worker rejects with its error. A worker that answered (a plan or an error
 * report, an exception in the engine included) is kept for the next run; a thread that died or was terminated is not.
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
    const worker = acquire()
    const since = epoch
    let settled = false
    let grace: ReturnType<typeof setTimeout> | undefined
    /** Ends the run: the worker is kept when it answered, else terminated. */
    const finish = (fn: () => void, answered: boolean): void => {
      if (settled) return
      settled = true
      if (grace) clearTimeout(grace)
      opts.signal?.removeEventListener('abort', onAbort)
      worker.off('message', onMessage)
      worker.off('error', onError)
      worker.off('exit', onExit)
      if (answered && since === epoch) release(worker)
      else void worker.terminate()
      fn()
    }
    const onAbort = (): void => {
      Atomics.store(flag, 0, 1)
      grace = setTimeout(() => finish(() => reject(abortError()), false), ABORT_GRACE_MS)
    }
    const onMessage = (m: WorkerReply): void => {
      if (m.type === 'progress') opts.onProgress?.({ iteration: m.iteration, best: m.best, elapsedMs: m.elapsedMs, ...(m.stage ? { stage: m.stage } : {}) })
      else if (m.type === 'done') finish(() => resolvePlan(m.plan), true)
      else if (m.type === 'error')
        finish(
          () =>
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
          true,
        )
    }
    const onError = (e: Error): void => finish(() => reject(e), false)
    const onExit = (code: number): void => finish(() => reject(new Error(`planning worker exited with code ${code} before answering`)), false)
    opts.signal?.addEventListener('abort', onAbort, { once: true })
    worker.on('message', onMessage)
    worker.on('error', onError)
    worker.on('exit', onExit)
    worker.postMessage({ type: 'solve', problem, options, stop } satisfies WorkerRequest)
  })
}
