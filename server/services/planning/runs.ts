// Planner runs: one at a time per workshop, in a worker thread; progress is pushed live and the result becomes a draft plan.
import { randomUUID } from 'node:crypto'
import { and, desc, eq, sql } from 'drizzle-orm'
import type { Db } from '../../db/client'
import * as s from '../../db/schema/index'
import { AppError } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import type { Plan } from '../../scheduler/model.ts'
import { SchedulingInputError } from '../../scheduler/model.ts'
import { checkProblem } from '../../scheduler/check.ts'
import { runInWorker } from '../../scheduler/run-in-worker.ts'
import { audit } from '../audit'
import { typicalDayMinutes, workingMinutesBetween } from '../../../shared/domain/working-time'
import { loadPlanningData, type PlanningData } from './problem'
import { currentAssignments, toAssignments } from './assignments'
import { LOCK } from '../../lib/locks'

export interface RunState {
  id: string
  workshopId: number
  status: 'running' | 'done' | 'cancelled' | 'failed'
  startedAt: string
  timeLimitSeconds: number
  progress: { iteration: number; weightedTardiness: number; makespan: number; elapsedMs: number } | null
  planId: number | null
  error: string | null
  /** Why a finished run left no draft (nothing better than the live plan). */
  note: string | null
  stability: 'small-changes' | 'best-dates'
  controller: AbortController
}

const runs = new Map<string, RunState>()
const publicRun = ({ controller: _c, ...r }: RunState) => r

/** Turns the engine's input errors into a 422 that names the job bag and operation. */
export function planningError(err: unknown, data?: PlanningData): AppError | unknown {
  if (!(err instanceof SchedulingInputError)) return err
  const m = err.operationId ? data?.meta.operations.get(err.operationId) : undefined
  const where = m ? `Job bag ${m.bag.number}, step "${m.op.name}": ` : ''
  return new AppError({ code: 'unprocessable', message: `${where}${err.message}`, details: { reason: err.code, jobBagId: m?.bag.id ?? err.jobId, operationId: m?.op.id ?? err.operationId } })
}

/** Loads the problem with the published plan as the one to stay close to (stability). */
export async function problemWithPrevious(db: Db, workshopId: number, now: Date) {
  const data = await loadPlanningData(db, workshopId, now)
  const previous = await currentAssignments(db, workshopId)
  data.problem.previous = Object.fromEntries(
    Object.entries(previous)
      .filter(([id]) => data.meta.operations.has(id))
      .map(([id, a]) => [id, { benchId: a.benchId, personId: a.personId, start: data.clock.toMinute(a.start) }]),
  )
  return data
}

export async function startRun(deps: Deps, actor: Actor, o: { timeLimitSeconds: number; seed: number; stability?: 'small-changes' | 'best-dates'; now?: Date }) {
  for (const r of runs.values()) if (r.workshopId === actor.workshopId && r.status === 'running')
    throw new AppError({ code: 'conflict', message: 'The planner is already running for this workshop; wait for it or stop it.', details: { runId: r.id } })
  const data = await problemWithPrevious(deps.db, actor.workshopId, o.now ?? new Date())
  try {
    checkProblem(data.problem)
  } catch (err) {
    throw planningError(err, data)
  }
  const run: RunState = { id: randomUUID(), workshopId: actor.workshopId, status: 'running', startedAt: new Date().toISOString(), timeLimitSeconds: o.timeLimitSeconds, progress: null, planId: null, error: null, note: null, stability: o.stability ?? 'small-changes', controller: new AbortController() }
  runs.set(run.id, run)
  let lastEmit = 0
  void runInWorker(data.problem, { seed: o.seed, timeLimitMs: o.timeLimitSeconds * 1000, stability: run.stability }, {
    signal: run.controller.signal,
    onProgress: (p) => {
      run.progress = { iteration: p.iteration, weightedTardiness: p.best.weightedTardiness, makespan: p.best.makespan, elapsedMs: p.elapsedMs }
      if (p.elapsedMs - lastEmit > 250) {
        lastEmit = p.elapsedMs
        deps.realtime.emitTransient(actor.workshopId, 'plan:progress', { runId: run.id, ...run.progress })
      }
    },
  })
    .then(async (plan) => {
      if (run.controller.signal.aborted) { run.status = 'cancelled'; return }
      // A plan that breaks a rule (say, a pin its earlier steps cannot reach) is never offered as a draft.
      if (!plan.score.feasible) throw new AppError({ code: 'unprocessable', message: `The planner found no plan that keeps every rule: ${plan.score.violations.slice(0, 3).join('; ')}. Unpin or move the step concerned and run again.` })
      // A draft is offered only when it beats the live plan kept as it is (re-timed from now).
      const live = plan.stats.previous
      if (live && !betterThanLive(plan.score, live, run.stability)) {
        run.status = 'done'
        run.note = `No better plan found in ${o.timeLimitSeconds} s: the live plan stays as it is.`
        return
      }
      run.planId = await saveDraft(deps, actor, data, plan)
      run.status = 'done'
      deps.realtime.emit(actor.workshopId, 'plan:drafted', { id: run.planId, runId: run.id })
    })
    .catch((err) => {
      run.status = run.controller.signal.aborted ? 'cancelled' : 'failed'
      run.error = run.status === 'cancelled' ? null : String((planningError(err, data) as Error).message ?? err)
      if (run.status === 'failed') console.error('[planner] run failed:', err)
    })
  return publicRun(run)
}

/** Less weighted lateness always counts; an earlier finish at equal lateness only when the manager asked for best dates. */
export function betterThanLive(score: { weightedTardiness: number; makespan: number }, live: { weightedTardiness: number; makespan: number }, stability: 'small-changes' | 'best-dates') {
  if (score.weightedTardiness !== live.weightedTardiness) return score.weightedTardiness < live.weightedTardiness
  return stability === 'best-dates' && score.makespan < live.makespan
}

export function getRun(actor: Actor, id: string) {
  const r = runs.get(id)
  if (!r || r.workshopId !== actor.workshopId) throw new AppError({ code: 'not-found', message: 'Planner run not found' })
  return publicRun(r)
}

export function cancelRun(actor: Actor, id: string) {
  const r = runs.get(id)
  if (!r || r.workshopId !== actor.workshopId) throw new AppError({ code: 'not-found', message: 'Planner run not found' })
  if (r.status === 'running') r.controller.abort()
  return publicRun(r)
}

/** Waits for a run to end (used by tests and the CLI-like callers). */
export async function waitForRun(id: string, timeoutMs = 120_000) {
  const t0 = Date.now()
  for (;;) {
    const r = runs.get(id)
    if (!r || r.status !== 'running') return r ? publicRun(r) : undefined
    if (Date.now() - t0 > timeoutMs) throw new Error('run did not end in time')
    await new Promise((res) => setTimeout(res, 50))
  }
}

async function saveDraft(deps: Deps, actor: Actor, data: PlanningData, plan: Plan) {
  return deps.db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.livePlan}, ${actor.workshopId})`)
    const [last] = await tx.select({ n: s.planVersions.number }).from(s.planVersions).where(eq(s.planVersions.workshopId, actor.workshopId)).orderBy(desc(s.planVersions.number)).limit(1)
    const [published] = await tx.select({ id: s.planVersions.id }).from(s.planVersions).where(and(eq(s.planVersions.workshopId, actor.workshopId), eq(s.planVersions.status, 'published')))
    const [row] = await tx.insert(s.planVersions).values({
      workshopId: actor.workshopId, number: (last?.n ?? 0) + 1, status: 'draft', createdBy: actor.userId,
      score: { ...summarise(data, plan), basedOnPlanId: published?.id ?? null },
      assignments: toAssignments(data, plan),
    }).returning({ id: s.planVersions.id })
    await audit(tx, actor, 'draft', 'plan', row!.id, { weightedTardiness: plan.score.weightedTardiness, makespan: plan.score.makespan })
    return row!.id
  })
}

function summarise(data: PlanningData, plan: Plan) {
  const c = data.clock
  const late = plan.jobs.filter((j) => j.tardiness > 0).length
  // Lateness as the workshop counts it: working time between the promised moment and the expected finish.
  const dues = new Map(data.problem.jobs.map((j) => [j.id, j.due]))
  const lateWorking = plan.jobs.filter((j) => j.tardiness > 0).map((j) => workingMinutesBetween(data.meta.open, dues.get(j.jobId)!, j.completion))
  return {
    weightedTardiness: plan.score.weightedTardiness,
    weightedTardinessHours: Math.round((plan.score.weightedTardiness / 60) * 10) / 10,
    completion: c.toDate(plan.score.makespan).toISOString(),
    moves: plan.score.moves,
    feasible: plan.score.feasible,
    violations: plan.score.violations.slice(0, 20),
    lateJobs: late,
    lateWorkingMinutes: lateWorking.reduce((a, m) => a + m, 0),
    worstLateWorkingMinutes: lateWorking.reduce((a, m) => Math.max(a, m), 0),
    dayMinutes: typicalDayMinutes(data.meta.open),
    jobs: plan.jobs.length,
    operations: plan.operations.length,
    iterations: plan.stats.iterations,
    elapsedMs: Math.round(plan.stats.elapsedMs),
  }
}
