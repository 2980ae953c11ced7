// Planner runs: a row any app instance can read and a queue job one instance takes (server/jobs); one run at a time per
// workshop, solved in a worker thread, progress and a heartbeat written to the row and relayed live, the result saved once as a draft.
import { randomUUID } from 'node:crypto'
import { and, eq, inArray, lt, sql } from 'drizzle-orm'
import { describe } from '../../shared/domain/rules'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { AppError } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import type { EventPayload } from '../realtime/hub'
import { SchedulingInputError } from '../scheduler/model.ts'
import { checkProblem } from '../scheduler/check.ts'
import { runInWorker } from '../scheduler/run-in-worker.ts'
import { loadPlanningData, type PlanningData } from './problem'
import { engineId } from './assignments'
import { saveDraft } from './drafts'
import { liveToBeat, readLivePlan } from './live-plan'
import { PLAN_RUN_TRIES, QUEUES } from '../jobs/queue'
import { isUniqueViolation } from '../services/versioned'

/** Turns the engine's input errors into a 422 that names the job bag and operation. */
export function planningError(err: unknown, data?: PlanningData): AppError | unknown {
  if (!(err instanceof SchedulingInputError)) return err
  const m = err.operationId ? data?.meta.operations.get(err.operationId) : undefined
  const where = m ? `Job bag ${m.bag.number}, step "${m.op.name}": ` : ''
  return new AppError({
    code: 'unprocessable',
    message: `${where}${err.message}`,
    details: { reason: err.code, jobBagId: m?.bag.id ?? err.jobId, operationId: m?.op.id ?? err.operationId },
  })
}

/** Loads the problem with the published plan as the one to stay close to (stability). */
export async function problemWithPrevious(db: Db, workshopId: number, now: Date) {
  const data = await loadPlanningData(db, workshopId, now)
  const previous = await readLivePlan(db, workshopId)
  data.problem.previous = Object.fromEntries(
    [...previous.assignments.values()]
      .filter((a) => data.meta.operations.has(String(a.operationId)))
      .map((a) => [String(a.operationId), { benchId: engineId(a.benchId), personId: engineId(a.personId), start: data.clock.toMinute(a.start) }]),
  )
  return data
}

export type PlanRunRow = typeof s.planRuns.$inferSelect

/** What the API answers for a run (the same on every instance: it is read from the row). */
export function publicRun(r: PlanRunRow) {
  return {
    id: r.id,
    workshopId: r.workshopId,
    status: r.status,
    startedAt: r.startedAt ?? r.createdAt,
    timeLimitSeconds: r.options.timeLimitSeconds,
    progress: r.progress,
    planId: r.planId,
    error: r.error,
    note: r.note,
    stability: r.options.stability,
    cancelRequested: r.cancelRequested,
  }
}
export type PublicRun = ReturnType<typeof publicRun>
const ACTIVE = ['queued', 'running'] as const

/** Runs taking place on this instance, with the attempt they hold (their writes name it). */
const local = new Map<string, { attempt: number; controller: AbortController }>()

/** Checks the problem here (a bad input is refused at once), stores the run and queues it in one transaction. */
export async function startRun(
  deps: Deps,
  actor: Actor,
  o: { timeLimitSeconds: number; seed: number; stability?: 'small-changes' | 'best-dates'; now?: Date },
) {
  await refuseIfActive(deps.db, actor.workshopId)
  const data = await problemWithPrevious(deps.db, actor.workshopId, o.now ?? new Date())
  try {
    checkProblem(data.problem)
  } catch (err) {
    throw planningError(err, data)
  }
  const options: s.PlanRunOptions = {
    timeLimitSeconds: o.timeLimitSeconds,
    seed: o.seed,
    stability: o.stability ?? 'small-changes',
    ...(o.now ? { now: o.now.toISOString() } : {}),
  }
  let row: PlanRunRow
  try {
    row = await deps.db.transaction(async (tx) => {
      const [r] = await tx.insert(s.planRuns).values({ id: randomUUID(), workshopId: actor.workshopId, createdBy: actor.userId, options }).returning()
      if (!deps.jobs) return r!
      const jobId = await deps.jobs.send(QUEUES.planRun, { runId: r!.id }, { tx })
      const [withJob] = await tx.update(s.planRuns).set({ jobId }).where(eq(s.planRuns.id, r!.id)).returning()
      return withJob!
    })
  } catch (err) {
    // Two managers pressing at once (on one instance or two): the database keeps one active run per workshop.
    if (isUniqueViolation(err)) await refuseIfActive(deps.db, actor.workshopId)
    throw err
  }
  if (deps.jobs) deps.jobs.wake(QUEUES.planRun)
  // Without a queue (the demo's first plan from a script) the run takes place here.
  else void runPlanJob(deps, { runId: row.id }).catch((err) => console.error('[planner] run failed:', err))
  return publicRun(row)
}

async function refuseIfActive(db: Db, workshopId: number) {
  const [r] = await db
    .select({ id: s.planRuns.id })
    .from(s.planRuns)
    .where(and(eq(s.planRuns.workshopId, workshopId), inArray(s.planRuns.status, [...ACTIVE])))
  if (r)
    throw new AppError({ code: 'conflict', message: 'The planner is already running for this workshop; wait for it or stop it.', details: { runId: r.id } })
}

/**
 * The queue's handler: takes the run (a new attempt), solves, and saves the draft in a transaction that first checks
 * the row is still held by this attempt — a run another instance took over meanwhile saves nothing here.
 */
export async function runPlanJob(deps: Deps, { runId }: { runId: string }, job?: { id: string }) {
  const [row] = await deps.db
    .update(s.planRuns)
    .set({
      status: 'running',
      attempt: sql`${s.planRuns.attempt} + 1`,
      instance: deps.jobs?.instance ?? 'local',
      jobId: job?.id ?? sql`${s.planRuns.jobId}`,
      startedAt: sql`coalesce(${s.planRuns.startedAt}, now())`,
      heartbeatAt: sql`now()`,
      error: null,
    })
    .where(and(eq(s.planRuns.id, runId), inArray(s.planRuns.status, [...ACTIVE])))
    .returning()
  if (!row) return { skipped: 'the run has ended already' }
  const held = and(eq(s.planRuns.id, runId), eq(s.planRuns.attempt, row.attempt), eq(s.planRuns.status, 'running'))
  const o = row.options
  const controller = new AbortController()
  let lost = false
  let progress: s.PlanRunProgress | null = row.progress
  let data: PlanningData | undefined
  /** Ends the run if this attempt still holds it; says whether it did. */
  const finish = async (set: Partial<typeof s.planRuns.$inferInsert>) =>
    (
      await deps.db
        .update(s.planRuns)
        .set({ ...set, progress, finishedAt: sql`now()` })
        .where(held)
        .returning({ id: s.planRuns.id })
    ).length > 0
  /** Tells the planners the run ended without a draft or an error (after its row says so). */
  const ended = (outcome: 'no-better' | 'stopped', extra: Omit<EventPayload<'plan:ended'>, 'runId' | 'outcome'> = {}) =>
    deps.realtime.emit(row.workshopId, 'plan:ended', { runId, outcome, ...extra })
  /** Ends the run as stopped if this attempt still holds it, and says so live. */
  const stopped = async () => {
    if (await finish({ status: 'cancelled' })) ended('stopped')
    return { cancelled: true }
  }
  if (row.cancelRequested) return stopped()
  local.set(runId, { attempt: row.attempt, controller })
  const beatMs = Math.min(2000, ((deps.jobs?.timing.staleRunSeconds ?? 30) * 1000) / 4)
  const beat = setInterval(() => {
    deps.db
      .update(s.planRuns)
      .set({ heartbeatAt: sql`now()`, progress })
      .where(held)
      .returning({ cancel: s.planRuns.cancelRequested })
      .then(
        ([r]) => {
          if (!r) {
            lost = true
            controller.abort()
          } // taken over by another instance (this one looked gone) or ended
          else if (r.cancel) controller.abort()
        },
        (err) => console.error('[planner] heartbeat failed:', (err as Error).message),
      )
  }, beatMs)
  try {
    const loaded = await problemWithPrevious(deps.db, row.workshopId, o.now ? new Date(o.now) : new Date())
    data = loaded
    checkProblem(loaded.problem)
    let lastEmit = 0
    const plan = await runInWorker(
      loaded.problem,
      { seed: o.seed, timeLimitMs: o.timeLimitSeconds * 1000, stability: o.stability },
      {
        signal: controller.signal,
        onProgress: (p) => {
          const stageChanged = p.stage !== progress?.stage
          progress = {
            iteration: p.iteration,
            weightedTardiness: p.best.weightedTardiness,
            makespan: p.best.makespan,
            elapsedMs: p.elapsedMs,
            ...(p.stage ? { stage: p.stage } : {}),
          }
          // At most four reports a second, but a new stage is always sent.
          if (p.elapsedMs - lastEmit > 250 || stageChanged) {
            lastEmit = p.elapsedMs
            deps.realtime.emitTransient(row.workshopId, 'plan:progress', { runId, ...progress })
          }
        },
      },
    )
    if (controller.signal.aborted) return lost ? { cancelled: true } : stopped()
    // A plan that breaks a rule (say, a pin its earlier steps cannot reach) is never offered as a draft.
    if (!plan.score.feasible)
      throw new AppError({
        code: 'unprocessable',
        message: `The planner found no plan that keeps every rule: ${describe(plan.score.violations)}. Unpin or move the step concerned and run again.`,
      })
    // A draft is offered only when it beats the live plan: as its bars stand now, or kept as it is and re-timed from now.
    const live = await liveToBeat(deps.db, row.workshopId, loaded, plan.stats.previous)
    if (live && !betterThanLive(plan.score, live, o.stability)) {
      const best = { weightedTardiness: plan.score.weightedTardiness, makespan: plan.score.makespan }
      // The stored figures are the plan the run ends with, not the last report on the way.
      progress = { ...(progress ?? { iteration: 0, elapsedMs: o.timeLimitSeconds * 1000 }), ...best }
      const note = noBetterNote(o.timeLimitSeconds, best, live, o.stability)
      if (await finish({ status: 'done', note }))
        ended('no-better', { note, best, live: { weightedTardiness: live.weightedTardiness, makespan: live.makespan } })
      return { planId: null }
    }
    const actor = await actorOf(deps.db, row)
    const saved = await deps.db.transaction(async (tx) => {
      const [cur] = await tx.select().from(s.planRuns).where(eq(s.planRuns.id, runId)).for('update')
      if (!cur || cur.status !== 'running' || cur.attempt !== row.attempt) return null
      if (cur.cancelRequested) {
        await tx
          .update(s.planRuns)
          .set({ status: 'cancelled', progress, finishedAt: sql`now()` })
          .where(eq(s.planRuns.id, runId))
        return { cancelled: true as const }
      }
      const id = await saveDraft(tx, actor, loaded, plan)
      await tx
        .update(s.planRuns)
        .set({ status: 'done', planId: id, progress, finishedAt: sql`now()` })
        .where(eq(s.planRuns.id, runId))
      return { planId: id }
    })
    if (saved && 'cancelled' in saved) {
      ended('stopped')
      return saved
    }
    const planId = saved?.planId ?? null
    if (planId) deps.realtime.emit(row.workshopId, 'plan:drafted', { id: planId, runId })
    return { planId }
  } catch (err) {
    if (lost) return { lost: true }
    if (controller.signal.aborted) return stopped()
    const error = String((planningError(err, data) as Error).message ?? err)
    if (await finish({ status: 'failed', error })) {
      console.error('[planner] run failed:', err)
      deps.realtime.emit(row.workshopId, 'plan:failed', { runId, error })
    }
    return { failed: error }
  } finally {
    clearInterval(beat)
    local.delete(runId)
  }
}

/** The manager who asked for the run (drafts and the audit name them). */
async function actorOf(db: Db, row: PlanRunRow): Promise<Actor> {
  const [u] = row.createdBy ? await db.select().from(s.users).where(eq(s.users.id, row.createdBy)) : []
  return { userId: u?.id ?? 0, workshopId: row.workshopId, role: u?.role ?? 'manager', personId: null, name: u?.name ?? 'planner' }
}

/**
 * Every instance, every few seconds: a running run whose instance stopped writing its heartbeat is queued again (a new job;
 * the old one is cancelled so it is not retried as well), or failed — visibly, with an event — once it has had its tries.
 * A queued run whose job is gone (failed in the queue itself) is failed too.
 */
export async function recoverStaleRuns(deps: Deps) {
  const jobs = deps.jobs
  if (!jobs) return
  const staleSeconds = jobs.timing.staleRunSeconds
  const failed = await deps.db.transaction(async (tx) => {
    const out: PlanRunRow[] = []
    const stale = await tx
      .select()
      .from(s.planRuns)
      .where(and(eq(s.planRuns.status, 'running'), lt(s.planRuns.heartbeatAt, sql`now() - make_interval(secs => ${staleSeconds})`)))
      .for('update', { skipLocked: true })
    for (const r of stale) {
      if (r.jobId) await jobs.cancel(QUEUES.planRun, r.jobId, { tx })
      if (r.attempt >= PLAN_RUN_TRIES) {
        const [f] = await tx
          .update(s.planRuns)
          .set({
            status: 'failed',
            finishedAt: sql`now()`,
            error: `The planner stopped answering ${r.attempt} times (the app instance running it went away). Nothing was changed; start it again.`,
          })
          .where(eq(s.planRuns.id, r.id))
          .returning()
        out.push(f!)
      } else {
        const jobId = await jobs.send(QUEUES.planRun, { runId: r.id }, { tx })
        await tx.update(s.planRuns).set({ status: 'queued', instance: null, jobId }).where(eq(s.planRuns.id, r.id))
        console.warn(`[planner] run ${r.id} lost its instance (${r.instance}); queued again`)
      }
    }
    const orphans = await tx
      .select()
      .from(s.planRuns)
      .where(and(eq(s.planRuns.status, 'queued'), lt(s.planRuns.createdAt, sql`now() - make_interval(secs => ${staleSeconds * 2})`)))
      .for('update', { skipLocked: true })
    for (const r of orphans) {
      const alive = r.jobId
        ? await tx.execute(sql`select 1 from pgboss.job where name = ${QUEUES.planRun} and id = ${r.jobId}::uuid and state in ('created', 'retry', 'active')`)
        : { rows: [] }
      if (alive.rows.length) continue
      const [f] = await tx
        .update(s.planRuns)
        .set({
          status: 'failed',
          finishedAt: sql`now()`,
          error: 'The planner run was lost from the queue before it started. Nothing was changed; start it again.',
        })
        .where(eq(s.planRuns.id, r.id))
        .returning()
      out.push(f!)
    }
    return out
  })
  for (const r of failed) deps.realtime.emit(r.workshopId, 'plan:failed', { runId: r.id, error: r.error ?? '' })
  jobs.wake(QUEUES.planRun)
}

/** Before this instance stops: its runs go back to the queue (a new job) for another instance, and stop here. */
export async function releaseLocalRuns(deps: Deps) {
  for (const [runId, l] of [...local]) {
    await deps.db
      .transaction(async (tx) => {
        const [r] = await tx
          .update(s.planRuns)
          .set({ status: 'queued', instance: null })
          .where(and(eq(s.planRuns.id, runId), eq(s.planRuns.attempt, l.attempt), eq(s.planRuns.status, 'running')))
          .returning()
        if (!r || !deps.jobs) return
        if (r.jobId) await deps.jobs.cancel(QUEUES.planRun, r.jobId, { tx })
        const jobId = await deps.jobs.send(QUEUES.planRun, { runId }, { tx })
        await tx.update(s.planRuns).set({ jobId }).where(eq(s.planRuns.id, runId))
      })
      .catch((err) => console.error('[planner] could not hand a run back:', (err as Error).message))
    l.controller.abort()
  }
}

/**
 * The words for a run that found nothing better: the live plan stays, and what the best plan found came to against it
 * (hours late × priority, as the planning dialog counts them).
 */
export function noBetterNote(
  seconds: number,
  best: { weightedTardiness: number; makespan: number },
  live: { weightedTardiness: number; makespan: number },
  stability: 'small-changes' | 'best-dates',
) {
  const hours = (weightedMinutes: number) => (Math.round((weightedMinutes / 60) * 10) / 10).toLocaleString('en-GB')
  const figures =
    hours(best.weightedTardiness) === hours(live.weightedTardiness)
      ? `The best plan found is ${hours(best.weightedTardiness)} h late × priority, the same as the live plan${stability === 'best-dates' ? ', and finishes no earlier' : ''}.`
      : `The best plan found is ${hours(best.weightedTardiness)} h late × priority, the live plan ${hours(live.weightedTardiness)} h.`
  return `No better plan found in ${seconds} s: the live plan stays as it is. ${figures}`
}

/** Less weighted lateness always counts; an earlier finish at equal lateness only when the manager asked for best dates. */
export function betterThanLive(
  score: { weightedTardiness: number; makespan: number },
  live: { weightedTardiness: number; makespan: number },
  stability: 'small-changes' | 'best-dates',
) {
  if (score.weightedTardiness !== live.weightedTardiness) return score.weightedTardiness < live.weightedTardiness
  return stability === 'best-dates' && score.makespan < live.makespan
}

export async function getRun(db: Db, actor: Actor, id: string) {
  const [r] = await db
    .select()
    .from(s.planRuns)
    .where(and(eq(s.planRuns.id, id), eq(s.planRuns.workshopId, actor.workshopId)))
  if (!r) throw new AppError({ code: 'not-found', message: 'Planner run not found' })
  return publicRun(r)
}

/**
 * A queued run ends at once (and says so live); a running one is asked to stop (its instance sees it at the next heartbeat,
 * this one at once, and says so when it has stopped). A run already over is answered as it ended.
 */
export async function cancelRun(deps: Pick<Deps, 'db' | 'realtime'>, actor: Actor, id: string) {
  const db = deps.db
  const mine = and(eq(s.planRuns.id, id), eq(s.planRuns.workshopId, actor.workshopId))
  const [r] = await db.select().from(s.planRuns).where(mine)
  if (!r) throw new AppError({ code: 'not-found', message: 'Planner run not found' })
  const ended = await db
    .update(s.planRuns)
    .set({ status: 'cancelled', finishedAt: sql`now()` })
    .where(and(mine, eq(s.planRuns.status, 'queued')))
    .returning({ id: s.planRuns.id })
  if (ended.length) deps.realtime.emit(actor.workshopId, 'plan:ended', { runId: id, outcome: 'stopped' })
  await db
    .update(s.planRuns)
    .set({ cancelRequested: true })
    .where(and(mine, eq(s.planRuns.status, 'running')))
  local.get(id)?.controller.abort()
  return getRun(db, actor, id)
}

/** Waits for a run to end, reading its row (used by tests and the demo's first plan). */
export async function waitForRun(db: Db, id: string, timeoutMs = 120_000) {
  const t0 = Date.now()
  for (;;) {
    const [r] = await db.select().from(s.planRuns).where(eq(s.planRuns.id, id))
    if (!r || !(ACTIVE as readonly string[]).includes(r.status)) return r ? publicRun(r) : undefined
    if (Date.now() - t0 > timeoutMs) throw new Error('run did not end in time')
    await new Promise((res) => setTimeout(res, 50))
  }
}
